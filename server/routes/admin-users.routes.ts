import { z } from "zod";
import { adminUserSchema, createUserSchema, updateUserSchema } from "@shared/api/users";
import { defineRoute } from "../lib/route";
import { createUser, listUsers, unlockUser, updateUser } from "../services/users.service";
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
      summary: "Create a user with one or more roles; an invitation with a link to choose their own password is e-mailed to them",
      tag: "admin",
      access: "users.manage",
      body: createUserSchema,
      responses: {
        201: { description: "Created.", schema: adminUserSchema },
        409: { description: "The e-mail is taken." },
      },
      handler: async ({ body, user }) => {
        const created = await createUser(db, auth, body, { userId: user.id });
        // The invitation carries a better-auth reset link, so the new user can choose their own password.
        notify.inviting(created.email);
        try {
          await auth.api.requestPasswordReset({ body: { email: created.email, redirectTo: "/reset-password" } });
        } catch (err) {
          logger.error({ err }, "could not queue the invitation");
        }
        return created;
      },
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
  ];
}
