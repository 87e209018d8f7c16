import { useEffect, useSyncExternalStore } from "react";
import { useQuery, useQueryClient, type QueryClient } from "@tanstack/react-query";
import { ApiError } from "@/lib/api-client";
import { getOutbox } from "@/features/defects/offline/outbox-instance";
import { yardKeys } from "../api/yard.queries";
import { syncYardSet } from "./yard-store";

/** While a yard screen is open the set is checked this often (a 304 costs a few hundred bytes). */
export const YARD_SYNC_EVERY_MS = 5 * 60_000;
/** Opening another yard screen within this time does not ask again. */
const FRESH_MS = 30_000;

interface SyncState {
  syncing: boolean;
  /** The last try failed: why, in words (null after a success). */
  error: string | null;
  /** The last failure was the network (not the server refusing). */
  offline: boolean;
}

// One sync at a time for the whole tab, shared by the yard screens.
let state: SyncState = { syncing: false, error: null, offline: false };
let inFlight: Promise<void> | null = null;
/** Per user: a shared tablet changes hands. */
const lastSuccess = new Map<string, number>();
const listeners = new Set<() => void>();
const setState = (patch: Partial<SyncState>) => {
  state = { ...state, ...patch };
  listeners.forEach((l) => l());
};

/** Fetches the set (If-None-Match) and hands it to the screens; `force` ignores the freshness pause. */
export function runYardSync(qc: QueryClient, userId: string, force = false): Promise<void> {
  if (inFlight) return inFlight;
  if (!force && Date.now() - (lastSuccess.get(userId) ?? 0) < FRESH_MS) return Promise.resolve();
  setState({ syncing: true });
  inFlight = syncYardSet(userId)
    .then((out) => {
      lastSuccess.set(userId, Date.now());
      qc.setQueryData(yardKeys.set(userId).queryKey, out.set);
      setState({ error: null, offline: false });
    })
    .catch((err: unknown) => {
      const offline = err instanceof ApiError && err.status === 0;
      setState({ error: err instanceof Error ? err.message : String(err), offline });
    })
    .finally(() => {
      inFlight = null;
      setState({ syncing: false });
    });
  return inFlight;
}

/**
 * The set on this tablet for the signed-in user, kept current while a yard screen is open: on
 * opening, when the network comes back, every few minutes, and shortly after an entry reached the
 * server (the slab is then inspected, the entry is among "mine").
 */
export function useYardSet(userId: string | undefined) {
  const qc = useQueryClient();
  const set = useQuery({ ...yardKeys.set(userId ?? ""), enabled: Boolean(userId) });
  const sync = useSyncExternalStore(
    (l) => {
      listeners.add(l);
      return () => listeners.delete(l);
    },
    () => state,
    () => state,
  );
  useEffect(() => {
    if (!userId) return;
    const run = (force = false) => {
      if (typeof navigator !== "undefined" && navigator.onLine === false) return;
      void runYardSync(qc, userId, force);
    };
    run();
    const onOnline = () => run(true);
    window.addEventListener("online", onOnline);
    const timer = setInterval(() => run(true), YARD_SYNC_EVERY_MS);
    let soon: ReturnType<typeof setTimeout> | null = null;
    const unsent = getOutbox().onSent(() => {
      if (soon) clearTimeout(soon);
      soon = setTimeout(() => run(true), 5_000);
    });
    return () => {
      window.removeEventListener("online", onOnline);
      clearInterval(timer);
      if (soon) clearTimeout(soon);
      unsent();
    };
  }, [qc, userId]);
  return {
    /** null until the first sync on this tablet; undefined while IndexedDB is read. */
    stored: set.data,
    ready: set.isSuccess,
    ...sync,
    syncNow: () => (userId ? runYardSync(qc, userId, true) : Promise.resolve()),
  };
}

export type YardSetState = ReturnType<typeof useYardSet>;
