import type { Role } from "@shared/roles";
import type { Language } from "@shared/i18n/languages";

declare global {
  namespace Express {
    interface Request {
      /** The signed-in person, or null; set by the auth-context middleware on every /api request. */
      user: { id: string; name: string; email: string; roles: Role[]; mustChangePassword?: boolean; language?: Language | null } | null;
      /** Set when the request authenticated with an API token (ingest routes). */
      apiToken?: { id: number; name: string; scopes: string[] };
    }
  }
}

export {};
