import { z } from "zod";
import { adminUserSchema, changeOwnPasswordSchema, createdUserSchema, createUserSchema, updateUserSchema } from "@shared/api/users";
import { defineRoute } from "../lib/route";
import { addUser, changeOwnPassword, listUsers, unlockUser, updateUser } from "../services/users.service";
import type { Deps } from "./deps";

const idParams = z.object({ id: z.string().min(1).max(64) });

export function adminUserRoutes({ db, auth, notify, logger }: Deps) {
  return [
    defineRoute({
      method: "get",
      path: "/admin/users",
      summary: "List users with their roles, and the addresses each is locked out from after repeated wrong passwords",
      tag: "admin",
      access: "users.manage",
      responses: { 200: { description: "All users.", schema: z.object({ users: z.array(adminUserSchema) }) } },
      handler: () => ({ users: listUsers(db, auth.signInGuard) }),
    }),
    defineRoute({
      method: "post",
      path: "/admin/users",
      summary:
        "Create a user with one or more roles, one way: an e-mailed invitation to choose their own password, or a first password (no mail) that they must change at their first sign-in",
      tag: "admin",
      access: "users.manage",
      body: createUserSchema,
      responses: {
        201: { description: "Created; for an invitation, whether its message is in the mail queue.", schema: createdUserSchema },
        409: { description: "The e-mail is taken." },
      },
      handler: ({ body, user }) => addUser({ db, auth, notify, logger }, body, user.id),
    }),
    defineRoute({
      method: "patch",
      path: "/admin/users/:id",
      summary: "Change a user's name or roles, or deactivate / reactivate them",
      tag: "admin",
      access: "users.manage",
      params: idParams,
      body: updateUserSchema,
      responses: {
        200: { description: "Updated.", schema: adminUserSchema },
        404: { description: "No such user." },
        409: { description: "Would leave no active administrator." },
      },
      handler: ({ params, body, user }) => {
        const updated = updateUser(db, params.id, body, user.id, auth.signInGuard);
        // Roles, name or active state changed: the user's very next request reads them afresh.
        auth.sessions.forgetUser(params.id);
        return updated;
      },
    }),
    defineRoute({
      method: "post",
      path: "/admin/users/:id/unlock",
      summary: "Lift the sign-in lock a user got after repeated wrong passwords, from every address (audited)",
      tag: "admin",
      access: "users.manage",
      params: idParams,
      responses: {
        200: { description: "Unlocked.", schema: adminUserSchema },
        404: { description: "No such user." },
        409: { description: "The account is not locked." },
      },
      handler: ({ params, user }) => unlockUser(db, auth.signInGuard, params.id, user.id),
    }),
    // The person's own side of an account made here: replacing the first password an administrator
    // set (nothing else opens until then: server/middleware/require-role.ts), or any later change.
    defineRoute({
      method: "post",
      path: "/me/password",
      summary:
        "Change one's own password (a first password set by an administrator must be changed this way before anything else opens); the account's other sessions end",
      tag: "system",
      access: "signed-in",
      body: changeOwnPasswordSchema,
      responses: {
        200: { description: "Changed; this session continues with a fresh cookie.", schema: z.object({ changed: z.literal(true) }) },
        400: { description: "The current password is not right, or the new one is not allowed." },
        429: { description: "Too many wrong passwords from this address: locked for a while." },
      },
      handler: async ({ req, res, body, user }) => {
        const cookies = await changeOwnPassword(
          db,
          auth,
          { email: user.email, cookie: req.headers.cookie ?? "", address: req.ip ?? req.socket.remoteAddress ?? "unknown" },
          body,
        );
        if (cookies.length > 0) res.append("Set-Cookie", cookies);
        return { changed: true as const };
      },
    }),
  ];
}
