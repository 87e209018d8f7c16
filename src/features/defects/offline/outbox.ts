import { openDB, type DBSchema, type IDBPDatabase } from "idb";
import type { Defect, DefectCreate } from "@shared/api/defects";
import { i18n } from "@/i18n";

/*
 * The yard tablet's outbox. Every entry is written to IndexedDB first, with its photos as Blobs;
 * a sender posts it when the network allows: the defect, then each photo with its own client key.
 * The entry leaves IndexedDB only once the server has confirmed the defect and every photo, so a
 * closed tab, a dead battery or a dropped Wi-Fi loses nothing, and a resend is harmless (the
 * server answers a known client key with the entry it already has).
 *
 * Plain TypeScript, no React: the screens subscribe to it, the unit test drives it directly. Its
 * own words (a refusal of its own, a full storage) are written in the language shown, from the
 * catalogue `yard` under `outbox`.
 */

export const OUTBOX_DB_NAME = "strandsight-outbox";

/** Something the server or the network said about an entry. */
export interface OutboxProblem {
  /** HTTP status; 0 when the network failed. */
  status: number;
  code: string;
  message: string;
  /** Set when a single photo was refused, not the entry. */
  photoKey?: string;
}

/** What the lists show of an entry without asking the server. */
export interface OutboxSummary {
  typeCode: string;
  typeName: string;
  severity: number;
  face: string;
  alongMm: number | null;
  acrossMm: number | null;
}

export interface OutboxEntryRecord {
  clientKey: string;
  /** Whose entry it is: a shared tablet sends each user's entries only under their own session. */
  userId: string;
  slabId: string;
  createdAt: number;
  /** The defect to post; null when the entry only adds photos to a defect already on the server. */
  body: DefectCreate | null;
  /** Set once the server has confirmed the defect. */
  defectId: number | null;
  summary: OutboxSummary;
  attempts: number;
  nextAttemptAt: number;
  /** A passing trouble (no network, server busy): retried with a growing pause. */
  lastError: OutboxProblem | null;
  /** Refused by the server (4xx): not retried until the inspector fixes it. */
  blocked: OutboxProblem | null;
}

export interface OutboxPhotoRecord {
  key: string;
  entryKey: string;
  name: string;
  type: string;
  size: number;
  blob: Blob;
  addedAt: number;
  /** Set once the server has stored the photo. */
  photoId: string | null;
  problem: OutboxProblem | null;
}

interface OutboxDb extends DBSchema {
  entries: { key: string; value: OutboxEntryRecord; indexes: { "by-user": string } };
  photos: { key: string; value: OutboxPhotoRecord; indexes: { "by-entry": string } };
}

export interface OutboxTransport {
  /** The server answers with the stored defect; a test's transport may answer with the id alone. */
  createDefect(body: DefectCreate): Promise<{ id: number; defect?: Defect }>;
  uploadPhoto(
    defectId: number,
    photo: Pick<OutboxPhotoRecord, "key" | "name" | "type" | "blob">,
    onProgress: (fraction: number | null) => void,
  ): Promise<{ id: string }>;
}

export interface OutboxDeps {
  transport: OutboxTransport;
  dbName?: string;
  now?: () => number;
  random?: () => number;
  isOnline?: () => boolean;
  /** Wakes the sender when the network comes back; returns an unsubscribe. */
  onWake?: (wake: () => void) => () => void;
  /** A fallback heartbeat, for networks that drop without an "offline" event. */
  heartbeatMs?: number;
}

export type EntryState = "waiting" | "sending" | "retrying" | "blocked" | "signed-out";

export interface OutboxPhotoView extends OutboxPhotoRecord {
  /** 0…1 while it goes up; null when the size is unknown; undefined when not uploading. */
  progress: number | null | undefined;
}

export interface OutboxEntryView extends OutboxEntryRecord {
  photos: OutboxPhotoView[];
  state: EntryState;
}

export interface OutboxSnapshot {
  /** False until IndexedDB has been read once. */
  ready: boolean;
  userId: string | null;
  /** The signed-in user's entries, oldest first. */
  entries: OutboxEntryView[];
  /** Entries of other users that wait on this device (sent when they sign in). */
  otherUsersCount: number;
  online: boolean;
  /** The session ended: nothing is sent until someone signs in again. */
  signedOut: boolean;
  /** Set when the device refused to store an entry (storage full, private mode). */
  storageError: string | null;
}

export interface NewOutboxEntry {
  /** The entry's key; for a new defect it is also the defect's client_key. */
  clientKey: string;
  userId: string;
  slabId: string;
  body: DefectCreate | null;
  defectId?: number | null;
  summary: OutboxSummary;
  photos: { key: string; name: string; type: string; blob: Blob }[];
}

export interface SentEvent {
  clientKey: string;
  defectId: number;
  slabId: string;
  /**
   * The server's record as it answered the create, when that answer is still the whole record (no
   * photo went up after it): the screens show it as sent at once instead of waiting for a re-read.
   */
  defect: Defect | null;
}

/** The pause before the next try: 2 s, 4 s, 8 s … at most a minute, with some spread so tablets do not retry in step. */
export function retryDelayMs(attempts: number, random: () => number = Math.random): number {
  const base = Math.min(60_000, 2_000 * 2 ** Math.max(0, attempts - 1));
  return Math.round(base * (0.8 + 0.4 * random()));
}

function problemOf(err: unknown, photoKey?: string): OutboxProblem {
  const e = err as { status?: unknown; code?: unknown; message?: unknown };
  const status = typeof e?.status === "number" ? e.status : 0;
  return {
    status,
    code: typeof e?.code === "string" ? e.code : status === 0 ? "network" : "error",
    message: typeof e?.message === "string" && e.message ? e.message : i18n.t("yard:outbox.notSent"),
    ...(photoKey ? { photoKey } : {}),
  };
}

type Verdict = "retry" | "refused" | "signed-out";

/** Network trouble, a busy or failing server: try again later. A 4xx will not change its mind. */
function judge(p: OutboxProblem): Verdict {
  if (p.status === 401) return "signed-out";
  if (p.status >= 400 && p.status < 500 && p.status !== 408 && p.status !== 429) return "refused";
  return "retry";
}

export class OutboxBusyError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "OutboxBusyError";
  }
}

export function createOutbox(deps: OutboxDeps) {
  const now = deps.now ?? (() => Date.now());
  const random = deps.random ?? Math.random;
  const isOnline = deps.isOnline ?? (() => (typeof navigator === "undefined" ? true : navigator.onLine !== false));
  const dbName = deps.dbName ?? OUTBOX_DB_NAME;

  let dbPromise: Promise<IDBPDatabase<OutboxDb>> | null = null;
  const db = () =>
    (dbPromise ??= openDB<OutboxDb>(dbName, 1, {
      upgrade(d) {
        const entries = d.createObjectStore("entries", { keyPath: "clientKey" });
        entries.createIndex("by-user", "userId");
        const photos = d.createObjectStore("photos", { keyPath: "key" });
        photos.createIndex("by-entry", "entryKey");
      },
      // Another tab upgrades the schema: let it, and reopen on the next call.
      blocking() {
        void dbPromise?.then((d) => d.close());
        dbPromise = null;
      },
      terminated() {
        dbPromise = null;
      },
    }));

  let userId: string | null = null;
  let signedOut = false;
  let sendingKey: string | null = null;
  let uploadingPhoto: string | null = null;
  const progress = new Map<string, number | null>();
  let snapshot: OutboxSnapshot = {
    ready: false,
    userId: null,
    entries: [],
    otherUsersCount: 0,
    online: isOnline(),
    signedOut: false,
    storageError: null,
  };
  let storageError: string | null = null;
  const listeners = new Set<() => void>();
  const sentListeners = new Set<(e: SentEvent) => void>();
  let timer: ReturnType<typeof setTimeout> | null = null;
  let heartbeat: ReturnType<typeof setInterval> | null = null;
  let unwake: (() => void) | null = null;
  let running: Promise<void> | null = null;
  let again = false;
  let ignoreBackoff = false;

  const emit = () => listeners.forEach((l) => l());

  function stateOf(e: OutboxEntryRecord): EntryState {
    if (e.clientKey === sendingKey) return "sending";
    if (e.blocked) return "blocked";
    if (signedOut) return "signed-out";
    if (e.lastError) return "retrying";
    return "waiting";
  }

  /** Reads IndexedDB again and tells the screens. */
  async function refresh() {
    const d = await db();
    const [entries, photos] = await Promise.all([d.getAll("entries"), d.getAll("photos")]);
    const byEntry = new Map<string, OutboxPhotoRecord[]>();
    for (const p of photos.sort((a, b) => a.addedAt - b.addedAt)) {
      const list = byEntry.get(p.entryKey) ?? [];
      list.push(p);
      byEntry.set(p.entryKey, list);
    }
    const mine = entries.filter((e) => e.userId === userId).sort((a, b) => a.createdAt - b.createdAt);
    snapshot = {
      ready: true,
      userId,
      entries: mine.map((e) => ({
        ...e,
        state: stateOf(e),
        photos: (byEntry.get(e.clientKey) ?? []).map((p) => ({ ...p, progress: p.key === uploadingPhoto ? (progress.get(p.key) ?? null) : undefined })),
      })),
      otherUsersCount: entries.filter((e) => e.userId !== userId).length,
      online: isOnline(),
      signedOut,
      storageError,
    };
    emit();
  }

  /** Progress changes often: update the snapshot in memory without reading IndexedDB. */
  function setProgress(photoKey: string, fraction: number | null) {
    progress.set(photoKey, fraction);
    snapshot = {
      ...snapshot,
      entries: snapshot.entries.map((e) =>
        e.photos.some((p) => p.key === photoKey) ? { ...e, photos: e.photos.map((p) => (p.key === photoKey ? { ...p, progress: fraction } : p)) } : e,
      ),
    };
    emit();
  }

  async function patchEntry(clientKey: string, patch: Partial<OutboxEntryRecord>) {
    const d = await db();
    const tx = d.transaction("entries", "readwrite");
    const e = await tx.store.get(clientKey);
    if (e) await tx.store.put({ ...e, ...patch });
    await tx.done;
  }

  async function patchPhoto(key: string, patch: Partial<OutboxPhotoRecord>) {
    const d = await db();
    const tx = d.transaction("photos", "readwrite");
    const p = await tx.store.get(key);
    if (p) await tx.store.put({ ...p, ...patch });
    await tx.done;
  }

  /** Entry and photos go together, in one transaction. */
  async function removeEntry(clientKey: string) {
    const d = await db();
    const tx = d.transaction(["entries", "photos"], "readwrite");
    const keys = await tx.objectStore("photos").index("by-entry").getAllKeys(clientKey);
    await Promise.all([...keys.map((k) => tx.objectStore("photos").delete(k)), tx.objectStore("entries").delete(clientKey)]);
    await tx.done;
  }

  type Outcome = "sent" | "retry" | "refused" | "signed-out" | "gone";

  async function sendEntry(clientKey: string): Promise<Outcome> {
    const d = await db();
    const e = await d.get("entries", clientKey);
    if (!e) return "gone";
    sendingKey = clientKey;
    await refresh();
    let step: string | undefined;
    try {
      let defectId = e.defectId;
      let answered: Defect | null = null;
      if (defectId === null) {
        if (!e.body) throw new Error(i18n.t("yard:outbox.noDefect"));
        const created = await deps.transport.createDefect(e.body);
        defectId = created.id;
        answered = created.defect ?? null;
        await patchEntry(clientKey, { defectId, lastError: null, attempts: 0 });
      }
      let refusedPhoto: OutboxProblem | null = null;
      const photos = (await d.getAllFromIndex("photos", "by-entry", clientKey)).sort((a, b) => a.addedAt - b.addedAt);
      for (const p of photos) {
        if (p.photoId) continue;
        if (p.problem && judge(p.problem) === "refused") {
          refusedPhoto ??= p.problem;
          continue;
        }
        step = p.key;
        answered = null;
        uploadingPhoto = p.key;
        setProgress(p.key, 0);
        try {
          const stored = await deps.transport.uploadPhoto(defectId, p, (f) => setProgress(p.key, f));
          await patchPhoto(p.key, { photoId: stored.id, problem: null });
        } catch (err) {
          const problem = problemOf(err, p.key);
          // One unreadable photo does not hold back the others; network trouble stops the entry.
          if (judge(problem) !== "refused") throw err;
          await patchPhoto(p.key, { problem });
          refusedPhoto ??= problem;
        } finally {
          uploadingPhoto = null;
          progress.delete(p.key);
        }
        step = undefined;
      }
      if (refusedPhoto) {
        await patchEntry(clientKey, { blocked: refusedPhoto, lastError: null });
        return "refused";
      }
      await removeEntry(clientKey);
      sentListeners.forEach((l) => l({ clientKey, defectId: defectId!, slabId: e.slabId, defect: answered }));
      return "sent";
    } catch (err) {
      const problem = problemOf(err, step);
      const verdict = judge(problem);
      const current = (await d.get("entries", clientKey)) ?? e;
      if (verdict === "refused") {
        await patchEntry(clientKey, { blocked: problem, lastError: null });
      } else if (verdict === "signed-out") {
        signedOut = true;
        await patchEntry(clientKey, { lastError: { ...problem, message: i18n.t("yard:outbox.signInAgain") } });
      } else {
        const attempts = current.attempts + 1;
        await patchEntry(clientKey, { attempts, nextAttemptAt: now() + retryDelayMs(attempts, random), lastError: problem });
      }
      return verdict;
    } finally {
      sendingKey = null;
    }
  }

  async function pass() {
    do {
      again = false;
      const force = ignoreBackoff;
      ignoreBackoff = false;
      if (!userId || signedOut || !isOnline()) break;
      const d = await db();
      const due = (await d.getAllFromIndex("entries", "by-user", userId))
        .filter((e) => !e.blocked && (force || e.nextAttemptAt <= now()))
        .sort((a, b) => a.createdAt - b.createdAt);
      for (const e of due) {
        if (userId !== e.userId) break;
        const outcome = await sendEntry(e.clientKey);
        // The network or the session is gone: the rest would fail the same way.
        if (outcome === "retry" || outcome === "signed-out") break;
      }
    } while (again);
  }

  async function schedule() {
    if (timer) clearTimeout(timer);
    timer = null;
    if (!userId || signedOut) return;
    const d = await db();
    const waiting = (await d.getAllFromIndex("entries", "by-user", userId)).filter((e) => !e.blocked);
    if (waiting.length === 0) return;
    const next = Math.min(...waiting.map((e) => e.nextAttemptAt));
    timer = setTimeout(() => void kick(), Math.max(0, next - now()));
  }

  /** Starts a sending pass, or asks the running one to go round again. Resolves when it is done. */
  function kick(opts: { ignoreBackoff?: boolean } = {}): Promise<void> {
    if (opts.ignoreBackoff) ignoreBackoff = true;
    if (running) {
      again = true;
      return running;
    }
    running = (async () => {
      try {
        await pass();
      } catch (err) {
        // IndexedDB trouble: say so, keep what is stored, try again on the next wake.
        storageError = (err as Error)?.message ?? String(err);
      } finally {
        running = null;
        await refresh().catch(() => undefined);
        await schedule().catch(() => undefined);
      }
    })();
    return running;
  }

  function wake() {
    void kick({ ignoreBackoff: true });
  }

  return {
    /** Begins sending the given user's entries (after sign-in, or when the app opens signed in). */
    async start(forUser: string) {
      if (userId !== forUser) {
        userId = forUser;
      }
      signedOut = false;
      if (!unwake && deps.onWake) unwake = deps.onWake(wake);
      if (!heartbeat && deps.heartbeatMs) heartbeat = setInterval(() => void kick(), deps.heartbeatMs);
      await refresh();
      await kick({ ignoreBackoff: true });
    },

    /** Stops sending (signed out); what is stored stays for the next sign-in. */
    async stop() {
      userId = null;
      if (timer) clearTimeout(timer);
      timer = null;
      await refresh();
    },

    /** The network may be back: send now, whatever the pause. */
    wake,

    /** Stores an entry on the device, then tries to send it. Resolves once it is safely stored. */
    async add(input: NewOutboxEntry): Promise<string> {
      const clientKey = input.clientKey;
      if (!input.body && input.defectId == null) throw new Error(i18n.t("yard:outbox.needsDefect"));
      const d = await db();
      const at = now();
      try {
        const tx = d.transaction(["entries", "photos"], "readwrite");
        await tx.objectStore("entries").add({
          clientKey,
          userId: input.userId,
          slabId: input.slabId,
          createdAt: at,
          body: input.body ? { ...input.body, client_key: clientKey } : null,
          defectId: input.defectId ?? null,
          summary: input.summary,
          attempts: 0,
          nextAttemptAt: at,
          lastError: null,
          blocked: null,
        });
        for (const [i, p] of input.photos.entries()) {
          await tx.objectStore("photos").add({ ...p, entryKey: clientKey, size: p.blob.size, addedAt: at + i, photoId: null, problem: null });
        }
        await tx.done;
        storageError = null;
      } catch (err) {
        storageError =
          (err as Error)?.name === "QuotaExceededError"
            ? i18n.t("yard:outbox.storageFull")
            : i18n.t("yard:outbox.couldNotStore", { message: (err as Error)?.message ?? String(err) });
        await refresh().catch(() => undefined);
        throw new Error(storageError);
      }
      await refresh();
      void kick();
      return clientKey;
    },

    /** Changes an entry that has not reached the server yet (e.g. after the server refused it). */
    async update(clientKey: string, body: DefectCreate, summary: OutboxSummary) {
      if (sendingKey === clientKey) throw new OutboxBusyError(i18n.t("yard:outbox.sendingNow"));
      const d = await db();
      const e = await d.get("entries", clientKey);
      if (!e) throw new OutboxBusyError(i18n.t("yard:outbox.sentMeanwhile"));
      if (e.defectId !== null) throw new OutboxBusyError(i18n.t("yard:outbox.reachedMeanwhile"));
      await patchEntry(clientKey, { body: { ...body, client_key: clientKey }, summary, blocked: null, lastError: null, attempts: 0, nextAttemptAt: now() });
      await refresh();
      void kick();
    },

    /**
     * Gives an entry the server refused for its slab id (logged offline under an id it does not know)
     * the right id, and sends it again, photos and all. Nothing else of the entry changes.
     */
    async fixSlabId(clientKey: string, slabId: string) {
      const id = slabId.trim().toUpperCase();
      if (!id || id.length > 40) throw new Error(i18n.t("yard:outbox.slabIdRule", { max: 40 }));
      if (sendingKey === clientKey) throw new OutboxBusyError(i18n.t("yard:outbox.sendingNow"));
      const d = await db();
      const e = await d.get("entries", clientKey);
      if (!e) throw new OutboxBusyError(i18n.t("yard:outbox.sentMeanwhile"));
      if (e.defectId !== null || !e.body) throw new OutboxBusyError(i18n.t("yard:outbox.reachedMeanwhile"));
      await patchEntry(clientKey, { slabId: id, body: { ...e.body, slab_id: id }, blocked: null, lastError: null, attempts: 0, nextAttemptAt: now() });
      await refresh();
      void kick({ ignoreBackoff: true });
    },

    /** Drops one waiting photo (e.g. one the server cannot read); the rest of the entry goes on. */
    async removePhoto(clientKey: string, photoKey: string) {
      if (uploadingPhoto === photoKey) throw new OutboxBusyError(i18n.t("yard:outbox.photoSendingNow"));
      const d = await db();
      await d.delete("photos", photoKey);
      const e = await d.get("entries", clientKey);
      if (e?.blocked?.photoKey === photoKey) await patchEntry(clientKey, { blocked: null, nextAttemptAt: now() });
      await refresh();
      void kick();
    },

    /** Deletes a waiting entry and its photos from the device, on the inspector's word. */
    async discard(clientKey: string) {
      if (sendingKey === clientKey) throw new OutboxBusyError(i18n.t("yard:outbox.sendingNow"));
      await removeEntry(clientKey);
      await refresh();
    },

    /** "Try again": clears a refusal and the pause, then sends. */
    async retry(clientKey: string) {
      await patchEntry(clientKey, { blocked: null, nextAttemptAt: now() });
      const d = await db();
      const photos = await d.getAllFromIndex("photos", "by-entry", clientKey);
      for (const p of photos) if (p.problem) await patchPhoto(p.key, { problem: null });
      await refresh();
      await kick({ ignoreBackoff: true });
    },

    /** One sending pass over every entry that is not refused, whatever its pause ("send now"). */
    flush: () => kick({ ignoreBackoff: true }),

    /** Resolves when the pass under way (if any) is over. */
    idle: () => running ?? Promise.resolve(),

    /** One sending pass over the entries whose pause is over (what the timer and heartbeat run). */
    sendDue: () => kick(),

    refresh,
    // Arrow functions: useSyncExternalStore calls them without the object.
    subscribe: (listener: () => void) => {
      listeners.add(listener);
      return () => listeners.delete(listener);
    },
    getSnapshot: () => snapshot,
    onSent(listener: (e: SentEvent) => void) {
      sentListeners.add(listener);
      return () => sentListeners.delete(listener);
    },

    async close() {
      if (timer) clearTimeout(timer);
      if (heartbeat) clearInterval(heartbeat);
      unwake?.();
      await running;
      const d = await dbPromise;
      d?.close();
      dbPromise = null;
    },
  };
}

export type Outbox = ReturnType<typeof createOutbox>;
