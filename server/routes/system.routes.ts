import { healthSchema } from "@shared/api/common";
import { aboutSchema } from "@shared/api/plant";
import { meSchema, sessionSchema } from "@shared/api/users";
import { ROLE_LABELS, type Role } from "@shared/roles";
import { languageSchema, type Language } from "@shared/i18n/languages";
import { z } from "zod";
import { eq } from "drizzle-orm";
import { user as userTable } from "../db/schema";
import { PUBLISHED_DEMO_PASSWORD } from "../env";
import { getSignInSettings } from "../services/sign-in-settings.service";
import { FAKE_DIRECTORY } from "../sso/fake-idp";
import { recordAudit } from "../services/audit.service";
import { defineRoute } from "../lib/route";
import { DEMO_USERS } from "../seed/catalogue";
import type { Deps } from "./deps";

/** The signed-in person as /me and /session give them; the must-change mark only while it holds. */
const meOf = (user: { id: string; name: string; email: string; roles: Role[]; mustChangePassword?: boolean; language?: Language | null }) => ({
  id: user.id,
  name: user.name,
  email: user.email,
  roles: user.roles,
  ...(user.mustChangePassword ? { mustChangePassword: true as const } : {}),
  ...(user.language ? { language: user.language } : {}),
});

export function systemRoutes({ db, env, auth }: Deps) {
  return [
    defineRoute({
      method: "get",
      path: "/health",
      summary: "Liveness check",
      tag: "system",
      access: "public",
      responses: { 200: { description: "The server is up.", schema: healthSchema } },
      handler: () => ({ status: "ok" as const }),
    }),
    defineRoute({
      method: "get",
      path: "/me",
      summary: "The signed-in user and their roles",
      tag: "system",
      access: "signed-in",
      responses: { 200: { description: "The user.", schema: meSchema } },
      // The client shows nothing but the change screen while the must-change mark holds.
      handler: ({ user }) => meOf(user),
    }),
    defineRoute({
      method: "put",
      path: "/me/language",
      summary: "Choose one's own language for the screens, e-mails and workbooks (null: follow the browser)",
      tag: "system",
      access: "signed-in",
      body: z.object({ language: languageSchema.nullable() }),
      responses: { 200: { description: "Saved; the person as the app now knows them.", schema: meSchema } },
      handler: ({ body, user }) => {
        db.transaction((tx) => {
          tx.update(userTable).set({ language: body.language, updatedAt: new Date() }).where(eq(userTable.id, user.id)).run();
          recordAudit(tx, {
            userId: user.id,
            action: "user.language.changed",
            entity: "user",
            entityId: user.id,
            before: { language: user.language ?? null },
            after: { language: body.language },
          });
        });
        auth.sessions.forgetUser(user.id);
        return meOf({ ...user, language: body.language });
      },
    }),
    defineRoute({
      method: "get",
      path: "/session",
      summary: "Who is signed in, if anyone (the app's first question; me is null when signed out)",
      tag: "system",
      access: "public",
      responses: { 200: { description: "The session, or me: null.", schema: sessionSchema } },
      handler: ({ user }) => ({ me: user ? meOf(user) : null }),
    }),
    defineRoute({
      method: "get",
      path: "/about",
      summary: "Product and plant name for the sign-in page",
      tag: "system",
      access: "public",
      responses: { 200: { description: "About this installation.", schema: aboutSchema } },
      handler: () => {
        const works = db.$client.prepare("select works_name from casters order by id limit 1").pluck().get() as string | undefined;
        const demo = db.$client.prepare("select 1 from plant_settings where key = 'demo.plant'").get() !== undefined;
        const showAccounts = demo && env.NODE_ENV !== "production";
        return {
          product: "Strandsight" as const,
          works: works ?? null,
          demo,
          demoAccounts: showAccounts ? DEMO_USERS.map((u) => ({ email: u.email, role: ROLE_LABELS[u.roles[0]] })) : [],
          // Only the published password (printed in the README); a password of the plant's own choosing is never shown.
          demoPassword: showAccounts && env.DEMO_PASSWORD === PUBLISHED_DEMO_PASSWORD ? env.DEMO_PASSWORD : null,
          signIn: {
            sso: auth.sso
              ? { name: auth.sso.name, ...(auth.sso.local ? { localPeople: FAKE_DIRECTORY.map((p) => ({ login: p.login, groups: [...p.groups] })) } : {}) }
              : null,
            localPasswords: auth.sso ? getSignInSettings(db).localPasswords : ("everyone" as const),
          },
        };
      },
    }),
  ];
}
