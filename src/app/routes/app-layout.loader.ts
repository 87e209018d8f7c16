import type { QueryClient } from "@tanstack/react-query";
import { redirect, type LoaderFunctionArgs } from "react-router";
import { authKeys } from "@/features/auth/api/session";

/** Who is signed in; nobody: off to the sign-in page, which comes back here afterwards. */
export async function signedInOrToSignIn(qc: QueryClient, request: Request) {
  const me = await qc.ensureQueryData(authKeys.me());
  if (!me) {
    const url = new URL(request.url);
    throw redirect(`/sign-in?next=${encodeURIComponent(url.pathname + url.search)}`);
  }
  return me;
}

/**
 * The frame's loader: nobody signed in goes to the sign-in page. Apart from the frame's module so
 * that the router can hold it from the start (src/app/router.tsx) and run it while the frame's code
 * and the screen's code are still being fetched.
 */
export function makeLoader(qc: QueryClient) {
  return async ({ request }: LoaderFunctionArgs) => {
    const me = await signedInOrToSignIn(qc, request);
    // A first password set by an administrator: the person chooses their own before any screen opens.
    if (me.mustChangePassword) {
      const url = new URL(request.url);
      throw redirect(`/change-password?next=${encodeURIComponent(url.pathname + url.search)}`);
    }
    return null;
  };
}
