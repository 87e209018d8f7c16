import type { QueryClient } from "@tanstack/react-query";
import { data } from "react-router";
import { can, type Capability } from "@shared/roles";
import { authKeys } from "@/features/auth/api/session";

/** For a screen's loader: the user must hold the capability, else the route's error view shows 403. */
export async function requireCapability(qc: QueryClient, capability: Capability) {
  const me = await qc.ensureQueryData(authKeys.me());
  // The frame's loader sends the person to choose their own password (app-layout.loader.ts, whose
  // redirect keeps where they were going); no screen asks for its data meanwhile.
  // The reason by its key: the error view says it in the reader's language (route-error.tsx).
  if (me?.mustChangePassword) throw data({ reason: "passwordFirst" }, { status: 403 });
  if (!me || !can(me.roles, capability)) {
    throw data({ reason: "forbidden" }, { status: 403 });
  }
  return me;
}
