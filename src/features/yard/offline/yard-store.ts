import { openDB, type DBSchema, type IDBPDatabase } from "idb";
import { yardSyncSchema, type YardSync } from "@shared/api/yard";
import { i18n } from "@/i18n";
import { ApiError } from "@/lib/api-client";

/*
 * The yard set on the tablet: what GET /api/yard/sync answered, kept in IndexedDB per user (a shared
 * tablet holds each inspector's own entries apart), with the ETag to ask "has it changed?" and the
 * time the server last confirmed it. One record per user: the screens read it whole into memory
 * (a few thousand slabs, about a megabyte) and search it there.
 */

export const YARD_DB_NAME = "strandsight-yard";

export interface StoredYardSet {
  userId: string;
  etag: string | null;
  /** When the server last confirmed the set (a new one, or 304: unchanged). */
  syncedAt: number;
  data: YardSync;
}

interface YardDb extends DBSchema {
  sets: { key: string; value: StoredYardSet };
}

let dbPromise: Promise<IDBPDatabase<YardDb>> | null = null;
const db = () =>
  (dbPromise ??= openDB<YardDb>(YARD_DB_NAME, 1, {
    upgrade(d) {
      d.createObjectStore("sets", { keyPath: "userId" });
    },
    blocking() {
      void dbPromise?.then((d) => d.close());
      dbPromise = null;
    },
    terminated() {
      dbPromise = null;
    },
  }));

export async function readYardSet(userId: string): Promise<StoredYardSet | null> {
  return (await (await db()).get("sets", userId)) ?? null;
}

async function writeYardSet(set: StoredYardSet) {
  await (await db()).put("sets", set);
}

export type SyncOutcome = { kind: "updated" | "unchanged"; set: StoredYardSet };

/**
 * Asks the server whether the set changed (If-None-Match) and keeps the answer. Throws ApiError
 * (status 0 without a network); what the tablet holds stays as it was.
 */
export async function syncYardSet(userId: string, signal?: AbortSignal): Promise<SyncOutcome> {
  const stored = await readYardSet(userId);
  let res: Response;
  try {
    res = await fetch("/api/yard/sync", {
      credentials: "same-origin",
      // A conditional request of our own: the browser hands the 304 to us instead of answering from its cache.
      headers: stored?.etag ? { "If-None-Match": stored.etag } : undefined,
      cache: "no-store",
      signal,
    });
  } catch (err) {
    if ((err as Error).name === "AbortError") throw err;
    throw new ApiError(0, "network", i18n.t("yard:syncStatus.noConnection"));
  }
  if (res.status === 304 && stored) {
    const set = { ...stored, syncedAt: Date.now() };
    await writeYardSet(set);
    return { kind: "unchanged", set };
  }
  const text = await res.text();
  let body: unknown;
  try {
    body = text ? JSON.parse(text) : undefined;
  } catch {
    body = undefined;
  }
  if (!res.ok) {
    const e = (body as { error?: { code?: string; message?: string } } | undefined)?.error;
    throw new ApiError(res.status, e?.code ?? "http_error", e?.message ?? i18n.t("yard:syncStatus.serverAnswered", { status: res.status }));
  }
  const set: StoredYardSet = { userId, etag: res.headers.get("etag"), syncedAt: Date.now(), data: yardSyncSchema.parse(body) };
  await writeYardSet(set);
  return { kind: "updated", set };
}
