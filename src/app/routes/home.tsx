import type { QueryClient } from "@tanstack/react-query";
import { redirect } from "react-router";
import { homeFor } from "@/config/nav";
import { authKeys } from "@/features/auth/api/session";

/** "/" sends each user to their own role's home. */
export function makeLoader(qc: QueryClient) {
  return async () => {
    const me = await qc.ensureQueryData(authKeys.me());
    throw redirect(me ? homeFor(me.roles) : "/sign-in");
  };
}

export function Component() {
  return null;
}
