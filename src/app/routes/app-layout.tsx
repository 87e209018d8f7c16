import type { QueryClient } from "@tanstack/react-query";
import { useEffect, useState } from "react";
import { useQuery, useQueryClient } from "@tanstack/react-query";
import { NavLink, Outlet, redirect, useNavigate, useNavigation, type LoaderFunctionArgs } from "react-router";
import { can, ROLE_LABELS } from "@shared/roles";
import { Button } from "@/components/ui/button";
import { Notice } from "@/components/ui/notice";
import { Logo } from "@/components/ui/logo";
import { navFor } from "@/config/nav";
import { authKeys, useSignOut } from "@/features/auth/api/session";
import { catalogueKeys } from "@/features/defects/api/catalogue.queries";
import { defectKeys } from "@/features/defects/api/defects.queries";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { slabKeys } from "@/features/slabs/api/slabs.queries";
import { plural } from "@/lib/format";

export function makeLoader(qc: QueryClient) {
  return async ({ request }: LoaderFunctionArgs) => {
    const me = await qc.ensureQueryData(authKeys.me());
    if (!me) {
      const url = new URL(request.url);
      throw redirect(`/sign-in?next=${encodeURIComponent(url.pathname + url.search)}`);
    }
    return null;
  };
}

export { RouteError as ErrorBoundary } from "./route-error";

/**
 * The tablet's outbox sends whatever screen is open, for whoever is signed in and logs defects.
 * Loaded on demand: the office roles never load it. Returns how many entries wait.
 */
function useOutboxSender(userId: string | undefined, logs: boolean): number {
  const qc = useQueryClient();
  const [waiting, setWaiting] = useState(0);
  useEffect(() => {
    if (!userId || !logs) return;
    let cancelled = false;
    const cleanups: (() => void)[] = [];
    void import("@/features/defects/offline/outbox-instance").then(({ getOutbox }) => {
      if (cancelled) return;
      const outbox = getOutbox();
      cleanups.push(
        outbox.subscribe(() => setWaiting(outbox.getSnapshot().entries.length)),
        outbox.onSent(() => {
          void qc.invalidateQueries({ queryKey: defectKeys.all });
          void qc.invalidateQueries({ queryKey: slabKeys.all });
          void qc.invalidateQueries({ queryKey: catalogueKeys.all });
        }),
        () => void outbox.stop(),
      );
      void outbox.start(userId);
    });
    return () => {
      cancelled = true;
      cleanups.forEach((c) => c());
      setWaiting(0);
    };
  }, [userId, logs, qc]);
  return waiting;
}

export function Component() {
  const { data: me } = useQuery(authKeys.me());
  const about = useQuery(plantKeys.about());
  const signOut = useSignOut();
  const navigate = useNavigate();
  const navigation = useNavigation();
  const waiting = useOutboxSender(me?.id, me ? can(me.roles, "defects.log") : false);
  const [confirmSignOut, setConfirmSignOut] = useState(false);
  if (!me) return null;
  const items = navFor(me.roles);
  const doSignOut = () => {
    setConfirmSignOut(false);
    signOut.mutate(undefined, { onSuccess: () => navigate("/sign-in", { replace: true }) });
  };

  return (
    <div className="flex min-h-dvh flex-col">
      <header className="bg-ink-900 text-white print:hidden">
        <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-x-6 gap-y-2 px-4 py-2">
          <NavLink to="/" className="flex items-center gap-2 py-1" aria-label="Strandsight home">
            <Logo />
            <span className="text-lg font-bold tracking-tight">Strandsight</span>
          </NavLink>
          <nav
            aria-label="Main"
            className={`order-3 flex w-full flex-wrap ${items.length > 12 ? "gap-0.5" : "gap-1"} pb-1 ${
              // A long menu (the administrator's) takes its own row rather than breaking into two.
              items.length > 6 ? "" : "lg:order-none lg:w-auto lg:flex-1 lg:pb-0"
            }`}
          >
            {items.map((i) => (
              <NavLink
                key={i.to}
                to={i.to}
                end={items.some((o) => o.to.startsWith(i.to + "/"))}
                className={({ isActive }) =>
                  // The administrator's long menu packs tighter so it keeps to one row on a wide screen.
                  `flex min-h-12 items-center whitespace-nowrap rounded-md ${items.length > 12 ? "px-1.5" : "px-3"} text-sm font-semibold ${
                    isActive ? "bg-strand-700 text-white" : "text-ink-200 hover:bg-ink-800 hover:text-white"
                  }`
                }
              >
                {i.label}
              </NavLink>
            ))}
          </nav>
          <div className="ml-auto flex items-center gap-3">
            <div className="text-right leading-tight">
              <div className="text-sm font-semibold" data-testid="user-name">{me.name}</div>
              <div className="text-xs text-ink-300">{me.roles.map((r) => ROLE_LABELS[r]).join(" · ")}</div>
            </div>
            <Button
              variant="secondary"
              className="min-h-12"
              disabled={signOut.isPending}
              onClick={() => (waiting > 0 ? setConfirmSignOut(true) : doSignOut())}
            >
              {signOut.isPending ? "Signing out…" : "Sign out"}
            </Button>
          </div>
        </div>
      </header>
      {about.data?.demo ? (
        <div className="border-b border-brass-400 bg-[#fbf3df] px-4 py-1 text-center text-xs font-medium text-ink-800">
          Invented demo plant: every heat, slab, defect, customer and claim shown here is made up.
        </div>
      ) : null}
      {confirmSignOut ? (
        <div className="mx-auto w-full max-w-7xl px-4 pt-3" data-testid="sign-out-waiting">
          <Notice tone="caution" title="Entries still waiting">
            {plural(waiting, "entry", "entries")} of yours still wait on this tablet. They stay here and are sent when you sign in again on
            this tablet.
            <span className="mt-2 flex flex-wrap gap-2">
              <Button variant="secondary" className="min-h-12" onClick={doSignOut}>
                Sign out anyway
              </Button>
              <Button className="min-h-12" onClick={() => setConfirmSignOut(false)}>
                Stay signed in
              </Button>
            </span>
          </Notice>
        </div>
      ) : null}
      {signOut.isError ? (
        <div className="mx-auto w-full max-w-7xl px-4 pt-3">
          <Notice tone="error">Could not reach the server to sign out: {signOut.error.message} Try again when the network is back.</Notice>
        </div>
      ) : null}
      {navigation.state === "loading" ? <div className="h-1 animate-pulse bg-strand-500 print:hidden" aria-hidden /> : <div className="h-1 print:hidden" aria-hidden />}
      <main className="mx-auto w-full max-w-7xl flex-1 px-4 py-6 print:max-w-none print:p-0">
        <Outlet />
      </main>
    </div>
  );
}
