import { afterFirstView } from "@/components/ui/first-view";
import { QueryClientProvider, useQueryClient, type QueryClient } from "@tanstack/react-query";
import { createContext, useCallback, useContext, useEffect, useMemo, useState, useSyncExternalStore, type ReactNode } from "react";
import { can } from "@shared/roles";
import type { Me } from "@shared/api/users";
import type { Defect, DefectList } from "@shared/api/defects";
import { authKeys } from "@/features/auth/api/session";
import { applyLanguage, languageFor } from "@/i18n";
import { catalogueKeys } from "@/features/defects/api/catalogue.queries";
import { defectKeys } from "@/features/defects/api/defects.queries";
import type { Outbox, OutboxSnapshot } from "@/features/defects/offline/outbox";
import { slabKeys } from "@/features/slabs/api/slabs.queries";

/** A new version of the app waits (service worker installed); it takes over only when asked. */
export interface AppUpdate {
  subscribe: (listener: () => void) => () => void;
  /** True once a new version is ready. */
  ready: () => boolean;
  /** Lets the new version take over and reloads this page. */
  apply: () => void;
}

const noUpdate: AppUpdate = { subscribe: () => () => undefined, ready: () => false, apply: () => undefined };

interface OutboxState {
  /** What waits on this device for the signed-in user; null for roles that log nothing, or before it is read. */
  snapshot: OutboxSnapshot | null;
  /** "Send now": one sending pass, whatever the pause. */
  sendNow: () => void;
}

const OutboxContext = createContext<OutboxState>({ snapshot: null, sendNow: () => undefined });
const UpdateContext = createContext<AppUpdate>(noUpdate);

/** The outbox as the app runs it (started once for the signed-in user, whatever screen shows). */
export function useAppOutbox(): OutboxState {
  return useContext(OutboxContext);
}

/** Whether a new version waits, and how to take it. */
export function useAppUpdate(): { ready: boolean; apply: () => void } {
  const u = useContext(UpdateContext);
  return { ready: useSyncExternalStore(u.subscribe, u.ready, u.ready), apply: u.apply };
}

function subscribeOnline(listener: () => void) {
  window.addEventListener("online", listener);
  window.addEventListener("offline", listener);
  return () => {
    window.removeEventListener("online", listener);
    window.removeEventListener("offline", listener);
  };
}

/** The browser's view of the network: false means surely offline; true may still mean a dead Wi-Fi. */
export function useOnline(): boolean {
  return useSyncExternalStore(
    subscribeOnline,
    () => navigator.onLine !== false,
    () => true,
  );
}

/** The signed-in user as cached by the queries, without asking the server (the screens' loaders do that). */
function useCachedMe(qc: QueryClient): Me | null | undefined {
  const key = authKeys.me().queryKey;
  const subscribe = useCallback((listener: () => void) => qc.getQueryCache().subscribe(listener), [qc]);
  return useSyncExternalStore(
    subscribe,
    () => qc.getQueryData(key),
    () => undefined,
  );
}

const noSubscribe = () => () => undefined;
const noSnapshot = () => null;

/** Puts a just-stored defect into the cached lists of the inspector's own entries it belongs in. */
function showSent(qc: QueryClient, defect: Defect) {
  for (const [key, data] of qc.getQueriesData<DefectList>({ queryKey: defectKeys.lists() })) {
    const filters = key[2] as { mine?: string; from?: string; sort?: string } | undefined;
    if (!data || filters?.mine !== "true" || filters.sort !== "newest") continue;
    if (filters.from && defect.foundAt < filters.from) continue;
    if (data.items.some((d) => d.id === defect.id)) continue;
    qc.setQueryData<DefectList>(key, { ...data, items: [defect, ...data.items], total: data.total + 1 });
  }
}

/**
 * Runs the tablet's outbox from app start for whoever is signed in and logs defects: an entry
 * waiting on the tablet is sent when the network returns on any screen — an error screen too,
 * since this sits above the router. Loaded on demand: the roles that log no defects never load its
 * code, and an office role's waits until the first screen is drawn (below).
 */
function OutboxRunner({ children }: { children: ReactNode }) {
  const qc = useQueryClient();
  const me = useCachedMe(qc);
  const userId = me && can(me.roles, "defects.log") ? me.id : null;
  // The inspector's tablet runs the outbox at once on every screen (entries made offline wait in it);
  // for an office role that may log a defect, its code waits until the first screen has been drawn
  // (2.5 s at most: src/components/ui/first-view.tsx), so it does not hold the first table back.
  const atOnce = !!me && me.roles.includes("inspector");
  const [outbox, setOutbox] = useState<Outbox | null>(null);
  // Bumped to try loading the outbox's code again once the network is back.
  const [attempt, setAttempt] = useState(0);

  useEffect(() => {
    if (!userId) {
      setOutbox(null);
      return;
    }
    let cancelled = false;
    const cleanups: (() => void)[] = [];
    (atOnce || window.location.pathname.startsWith("/yard") ? Promise.resolve() : afterFirstView())
      .then(() => import("@/features/defects/offline/outbox-instance"))
      .then(({ getOutbox }) => {
        if (cancelled) return;
        const o = getOutbox();
        cleanups.push(
          o.onSent((sent) => {
            // The server's answer shows the entry as sent at once in the inspector's own lists; the
            // lists are read again behind it all the same.
            if (sent.defect) showSent(qc, sent.defect);
            void qc.invalidateQueries({ queryKey: defectKeys.all });
            void qc.invalidateQueries({ queryKey: slabKeys.all });
            void qc.invalidateQueries({ queryKey: catalogueKeys.all });
          }),
          () => void o.stop(),
        );
        setOutbox(o);
        void o.start(userId);
      })
      .catch(() => {
        // Its code could not load (offline before the app was ever stored on this device): again when online.
        if (cancelled) return;
        const again = () => setAttempt((n) => n + 1);
        window.addEventListener("online", again, { once: true });
        cleanups.push(() => window.removeEventListener("online", again));
      });
    return () => {
      cancelled = true;
      cleanups.forEach((c) => c());
    };
  }, [userId, atOnce, qc, attempt]);

  const snapshot = useSyncExternalStore(outbox?.subscribe ?? noSubscribe, outbox?.getSnapshot ?? noSnapshot, noSnapshot);
  const value = useMemo<OutboxState>(
    () => ({ snapshot: outbox && snapshot?.ready ? snapshot : null, sendNow: () => void outbox?.flush() }),
    [outbox, snapshot],
  );
  return <OutboxContext.Provider value={value}>{children}</OutboxContext.Provider>;
}

/**
 * The screens follow the person's language (or, signed out, the browser's): src/i18n. Read from the
 * query cache itself rather than through useQuery: signing in and out clear the cache, and an
 * observer mounted before a clear would not see the session asked for afterwards.
 */
function LanguageFollower() {
  const qc = useQueryClient();
  const state = useSyncExternalStore(
    useCallback((changed: () => void) => qc.getQueryCache().subscribe(changed), [qc]),
    () => qc.getQueryState<Me | null>(authKeys.me().queryKey),
  );
  const language = state?.status === "success" ? languageFor(state.data?.language) : null;
  useEffect(() => {
    if (language) void applyLanguage(language);
  }, [language]);
  return null;
}

export function AppProvider({ queryClient, update = noUpdate, children }: { queryClient: QueryClient; update?: AppUpdate; children: ReactNode }) {
  return (
    <QueryClientProvider client={queryClient}>
      <LanguageFollower />
      <UpdateContext.Provider value={update}>
        <OutboxRunner>{children}</OutboxRunner>
      </UpdateContext.Provider>
    </QueryClientProvider>
  );
}
