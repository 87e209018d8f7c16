/**
 * Slab facts for the reports, held in memory as typed columns (report-cache-columns.ts: one narrow
 * column per field, every value exact). SQLite reads rows: a report over a million slabs and
 * twenty-odd variables spends seconds in the row engine, while scanning a typed column takes
 * milliseconds. SQLite stays the record; this is a read cache of slab_conditions.
 *
 * Freshness: everything that writes slab_conditions (the condition resolver, grade changes) tells
 * this module which slabs changed; those rows are read again before the next report (new slabs are
 * appended), and a change it cannot name rebuilds the whole cache.
 *
 * The running server (startReportCache) loads the cache in the background after it listens: from the
 * snapshot written at its last stop when that is whole and current (report-cache-snapshot.ts), else
 * from SQLite in slices of a few dozen milliseconds, so sign-in, the yard and every other request are
 * answered meanwhile. Until the facts are ready a report answers 503 "warming up" with Retry-After.
 * Without startReportCache (tests, benchmarks, the import thread) the cache is built on the first
 * report, as before.
 *
 * In the running server all of this happens in the report thread (report-thread.ts), which owns the
 * facts and runs the reports that read them: the app links the thread to its connection
 * (linkReportThread), and from then on slabFactsChanged on that connection is passed on to the
 * thread, in order, and startReportCache starts the loading there. The main thread holds no facts.
 */
import type Database from "better-sqlite3";
import type { Db } from "../db/client";
import { collectGarbage } from "../lib/collect-garbage";
import { HttpError, said } from "../lib/http-error";
import type { Logger } from "../lib/logger";
import {
  allocate,
  endBuild,
  FACT_VARIABLES,
  buildCapacity,
  closeDisk,
  columnTypes,
  diskBytes,
  ensureCapacity,
  ensureIndex,
  moveToDisk,
  put,
  SELECT_COLUMNS,
  factsBytes,
  columnKinds,
  type FactRow,
  type SlabFacts,
} from "./report-cache-columns";
import { chooseOnDisk, ColumnFileError, columnDirOf, columnMemoryMb, DEFAULT_COLUMNS_MB, removeStaleColumnFiles, withDiskBatch } from "./report-cache-disk";
import { readSnapshot, removeStaleTemps, writeSnapshot } from "./report-cache-snapshot";

export {
  exactColumn,
  exactValue,
  FACT_VARIABLES,
  VARIABLE_SCALE,
  eachPiece,
  valuesOf,
  type IdColumn,
  type SlabFacts,
  type ValueColumn,
} from "./report-cache-columns";

interface Warming {
  phase: "opening" | "checking" | "reading" | "rebuilding";
  startedAt: number;
  /** Work done and to do in the current phase (slab ids or bytes), for the estimate. */
  done: number;
  total: number;
  /** The highest slab id when loading began. */
  slabs: number;
  phaseStartedAt: number;
  promise: Promise<void>;
}

interface Background {
  snapshotFile: string | null;
  logger?: Logger;
  closed: boolean;
  /** `version` when the last snapshot was written or read (nothing new to write while equal). */
  savedVersion: number;
  writing: Promise<void> | null;
  /** SQLite's data_version at the last periodic look: another connection wrote when it changes. */
  dataVersion: number;
  sliceMs: number;
  /** Where the facts came from the last time they were loaded, and why a snapshot was not used. */
  loaded: { from: "snapshot" | "database"; snapshotIgnored: string | null } | null;
}

interface State {
  facts: SlabFacts | null;
  dirtyAll: boolean;
  dirty: Set<number>;
  /** Counts every change applied to the facts. */
  version: number;
  warming: Warming | null;
  background: Background | null;
}

const states = new WeakMap<Database.Database, State>();
const stateOf = (sqlite: Database.Database): State => {
  let s = states.get(sqlite);
  if (!s) states.set(sqlite, (s = { facts: null, dirtyAll: true, dirty: new Set(), version: 0, warming: null, background: null }));
  return s;
};

type FactsListener = (slabIds: number[] | null) => void;
const listeners = new Set<FactsListener>();

/**
 * Hears every change reported below. The import worker writes through its own connection; it
 * listens here and hands the slab ids back, so the server's cache (held per connection) learns them.
 */
export function onSlabFactsChanged(listener: FactsListener): () => void {
  listeners.add(listener);
  return () => listeners.delete(listener);
}

/** What the report thread (report-thread.ts) offers the connection it is linked to. */
export interface ReportThreadLink {
  /** Runs a report that reads the facts (by its kind) in the thread: its result, or its HttpError. */
  run(kind: string, query: unknown): Promise<unknown>;
  /** Slab facts changed (the ids, or all): passed on to the thread before any later report. */
  changed(slabIds: number[] | null): void;
  /** startReportCache for the thread's facts. */
  startCache(opts: ReportCacheOptions): ReportCacheHandle;
}

const links = new WeakMap<Database.Database, ReportThreadLink>();

/** Links a report thread to a connection: its reports and its change notices go to the thread. */
export function linkReportThread(db: Db, link: ReportThreadLink): () => void {
  links.set(db.$client, link);
  return () => {
    if (links.get(db.$client) === link) links.delete(db.$client);
  };
}

/** The report thread linked to this connection, if any (none: reports run here, as in tests of the cache). */
export const reportThreadOf = (db: Db): ReportThreadLink | undefined => links.get(db.$client);

const changeHooks = new WeakMap<Database.Database, FactsListener>();

/**
 * Hears the changes of slab conditions made on this connection or told to it (an import thread's),
 * after the cache has — the risk scoring (services/risk/risk.service.ts) listens here. One per connection.
 */
export function onSlabFactsChangedOn(db: Db, hook: FactsListener): () => void {
  changeHooks.set(db.$client, hook);
  return () => {
    if (changeHooks.get(db.$client) === hook) changeHooks.delete(db.$client);
  };
}

/**
 * What the data a report reads are now (the report thread's answers kept, report-answers.ts):
 * SQLite's data_version on this connection, which moves when another connection commits, and the
 * facts' state: their change count, the changes recorded but not yet applied, whether they are in.
 */
export function dataState(db: Db): { dataVersion: number; facts: string } {
  const s = stateOf(db.$client);
  return {
    dataVersion: db.$client.pragma("data_version", { simple: true }) as number,
    facts: `${s.version}:${s.dirtyAll ? "all" : s.dirty.size}:${s.facts ? "in" : "none"}`,
  };
}

/** Past this many changed slabs a rebuild is cheaper than reading each one again. */
const PATCH_LIMIT = 50_000;

/** Call after writing slab_conditions: the named slabs, or all when not named. */
export function slabFactsChanged(db: Db, slabIds?: Iterable<number>) {
  if (listeners.size > 0) {
    const ids = slabIds ? [...slabIds] : null;
    for (const l of listeners) l(ids);
    slabIds = ids ?? undefined;
  }
  const link = links.get(db.$client);
  if (link) {
    const ids = slabIds ? [...slabIds] : null;
    link.changed(ids);
    slabIds = ids ?? undefined;
  }
  const hook = changeHooks.get(db.$client);
  if (hook) {
    const ids = slabIds ? [...slabIds] : null;
    hook(ids);
    slabIds = ids ?? undefined;
  }
  const s = stateOf(db.$client);
  if (!slabIds) {
    s.dirtyAll = true;
    s.dirty.clear();
    return;
  }
  if (s.dirtyAll) return;
  for (const id of slabIds) s.dirty.add(id);
  if (s.dirty.size > PATCH_LIMIT) {
    s.dirtyAll = true;
    s.dirty.clear();
  }
}

/** New facts in place of the state's (the old ones' column files are closed). */
function setFacts(s: State, f: SlabFacts | null) {
  const old = s.facts;
  if (old === f) return;
  closeDisk(old);
  s.facts = f;
  // The columns let go (the old facts', or those just moved to files) go back to the system now,
  // not at some later collection: nothing else may allocate for a while.
  if (old || (f && Object.keys(f.disk).length > 0)) collectGarbage();
}

/**
 * Condition columns beyond the memory set aside for them go to files (report-cache-disk.ts). A file
 * that cannot be made or written (a full disk) leaves its column and the rest in memory, said in the log.
 */
function toDiskAsBudgeted(sqlite: Database.Database, f: SlabFacts, logger?: Logger): SlabFacts {
  const dir = columnDirOf(sqlite.name);
  // Columns in memory take their capacity (room for new slabs), not only the rows used.
  const keys = chooseOnDisk(f.slabId.length, columnTypes(f), dir);
  if (keys.length === 0) return f;
  try {
    moveToDisk(f, dir!, keys);
  } catch (err) {
    logger?.warn(
      { err, dir, inFiles: Object.keys(f.disk).length, inMemory: keys.length - Object.keys(f.disk).length },
      "report cache: condition columns could not be written to files; the rest stay in memory",
    );
  }
  return f;
}

const maxIdOf = (sqlite: Database.Database) => (sqlite.prepare("select coalesce(max(slab_id), 0) from slab_conditions").pluck().get() as number) ?? 0;

/**
 * Empty facts for a build up to slab id `maxId`: the condition columns that will not fit the memory
 * set aside for them go to their files as the rows come, so a build never holds them all (their
 * types guessed from the facts before, else on their grid; the build's end moves any more that must go).
 */
function allocateForBuild(sqlite: Database.Database, maxId: number, before: SlabFacts | null, inMemory: boolean): SlabFacts {
  const capacity = buildCapacity(maxId);
  const dir = inMemory ? null : columnDirOf(sqlite.name);
  const types = before ? columnTypes(before) : Object.fromEntries(FACT_VARIABLES.map((k) => [k, "Float32Array" as const]));
  const keys = chooseOnDisk(capacity, types, dir);
  return allocate(capacity, capacity, keys.length > 0 ? { dir: dir!, keys, types } : undefined);
}

/** A build's end: the column files written out, and more columns to files if the guess kept too many in memory. */
function finishBuild(sqlite: Database.Database, f: SlabFacts, inMemory: boolean, logger?: Logger): SlabFacts {
  endBuild(f);
  return inMemory ? f : toDiskAsBudgeted(sqlite, f, logger);
}

/** Said when a build's column files fail (a full disk): the build is made again with every column in memory. */
const inMemoryAgain = (err: unknown, logger?: Logger) =>
  logger?.warn({ err }, "report cache: the condition columns' files could not be written; the slab data are read again into memory");

function build(sqlite: Database.Database, before: SlabFacts | null, logger?: Logger, inMemory = false): SlabFacts {
  const maxId = maxIdOf(sqlite);
  // Ids only grow (slab rows are never deleted), so the highest id bounds the row count.
  const f = allocateForBuild(sqlite, maxId, before, inMemory);
  try {
    for (const r of sqlite.prepare(`select ${SELECT_COLUMNS} from slab_conditions order by slab_id`).raw().iterate() as IterableIterator<FactRow>) {
      put(f, f.size++, r);
    }
    return finishBuild(sqlite, f, inMemory, logger);
  } catch (err) {
    closeDisk(f);
    if (!(err instanceof ColumnFileError) || inMemory) throw err;
    inMemoryAgain(err, logger);
    return build(sqlite, before, logger, true);
  }
}

const nextTurn = () => new Promise<void>((resolve) => setImmediate(resolve));

/**
 * The same build, a slice at a time (pages of slab ids, `sliceMs` of work each), the event loop
 * free in between. A write during the build is recorded in the dirty set as usual and read again
 * afterwards, so the facts end current although the pages are read at different moments.
 */
async function buildInSlices(
  sqlite: Database.Database,
  w: Warming,
  sliceMs: number,
  stopped: () => boolean,
  before: SlabFacts | null,
  logger?: Logger,
  inMemory = false,
): Promise<SlabFacts> {
  const maxId = maxIdOf(sqlite);
  const f = allocateForBuild(sqlite, maxId, before, inMemory);
  try {
    return await fillInSlices(sqlite, f, w, sliceMs, stopped, maxId, inMemory, logger);
  } catch (err) {
    // Stopped or failed: the files made for it go.
    closeDisk(f);
    if (!(err instanceof ColumnFileError) || inMemory) throw err;
    inMemoryAgain(err, logger);
    return buildInSlices(sqlite, w, sliceMs, stopped, before, logger, true);
  }
}

async function fillInSlices(
  sqlite: Database.Database,
  f: SlabFacts,
  w: Warming,
  sliceMs: number,
  stopped: () => boolean,
  maxId: number,
  inMemory: boolean,
  logger?: Logger,
): Promise<SlabFacts> {
  const PAGE = 512;
  const page = sqlite.prepare(`select ${SELECT_COLUMNS} from slab_conditions where slab_id > ? order by slab_id limit ${PAGE}`).raw();
  let last = 0;
  w.total = maxId;
  for (;;) {
    const t = performance.now();
    let got: number;
    do {
      const rows = page.all(last) as FactRow[];
      got = rows.length;
      ensureCapacity(f, f.size + got);
      for (const r of rows) {
        ensureIndex(f, r[0]!);
        put(f, f.size++, r);
      }
      if (got) last = rows[got - 1]![0]!;
    } while (got === PAGE && performance.now() - t < sliceMs);
    w.done = last;
    if (got < PAGE) return finishBuild(sqlite, f, inMemory, logger);
    await nextTurn();
    if (stopped()) throw new Error("stopped");
  }
}

function patch(sqlite: Database.Database, s: State, f: SlabFacts) {
  const ids = [...s.dirty].sort((a, b) => a - b);
  s.dirty.clear();
  const stmt = sqlite.prepare(`select ${SELECT_COLUMNS} from slab_conditions where slab_id in (${Array(500).fill("?").join(",")})`).raw();
  // The columns in files are written at the end, in runs of adjacent rows (report-cache-disk.ts).
  withDiskBatch(
    () => f.size,
    () => {
      for (let k = 0; k < ids.length; k += 500) {
        const chunk = ids.slice(k, k + 500);
        const rows = (
          chunk.length === 500
            ? stmt
            : sqlite.prepare(`select ${SELECT_COLUMNS} from slab_conditions where slab_id in (${chunk.map(() => "?").join(",")})`).raw()
        ).all(...chunk) as FactRow[];
        ensureCapacity(f, f.size + rows.length);
        ensureIndex(f, chunk[chunk.length - 1]!);
        for (const r of rows) {
          const at = f.indexOf[r[0]!]!;
          put(f, at >= 0 ? at : f.size++, r);
        }
      }
    },
  );
  s.version++;
}

/** The answer while the facts load: 503 with an estimate, in words. */
function warmingUp(w: Warming): HttpError {
  const now = performance.now();
  const phaseMs = now - w.phaseStartedAt;
  // The rate measured so far in this phase; before that, about 6 s per million slabs for a rebuild
  // and 1 s per million for checking and reading a snapshot (w.slabs: the highest slab id).
  let leftS: number;
  if (w.done > 0 && w.total > 0) leftS = ((phaseMs / w.done) * Math.max(0, w.total - w.done)) / 1000;
  else leftS = w.phase === "rebuilding" ? (w.slabs * 6) / 1e6 : w.slabs / 1e6 + 1;
  const seconds = Math.max(1, Math.ceil(leftS));
  return new HttpError(503, "reports_warming_up", said("reports.warmingUp", { seconds }), {
    retryAfterSeconds: Math.min(10, Math.max(2, seconds)),
    secondsLeft: seconds,
    phase: w.phase,
    startedSecondsAgo: Math.round((now - w.startedAt) / 1000),
  });
}

/** The facts, fresh: rebuilt or patched as the recorded changes require (503 while they load). */
export function slabFacts(db: Db): SlabFacts {
  const sqlite = db.$client;
  const s = stateOf(sqlite);
  if (s.warming) throw warmingUp(s.warming);
  if (!s.facts || s.dirtyAll) {
    if (s.background && !s.background.closed) {
      startWarming(sqlite, s, false);
      throw warmingUp(s.warming!);
    }
    const f = build(sqlite, s.facts, s.background?.logger);
    setFacts(s, f);
    s.dirtyAll = false;
    s.dirty.clear();
    s.version++;
    return f;
  }
  if (!patched(sqlite, s, s.facts)) return slabFacts(db);
  return s.facts;
}

/**
 * The recorded changes applied to the facts; false when that failed (a column file that could not
 * be written): half a patch is not current, so everything is read again (dirtyAll).
 */
function patched(sqlite: Database.Database, s: State, f: SlabFacts): boolean {
  if (s.dirty.size === 0) return true;
  try {
    patch(sqlite, s, f);
    return true;
  } catch (err) {
    s.background?.logger?.error({ err }, "report cache: changed slabs could not be applied; the slab data are read again");
    s.dirtyAll = true;
    s.dirty.clear();
    return false;
  }
}

/** Starts loading the facts in the background (from the snapshot first when `fromSnapshot`). */
function startWarming(sqlite: Database.Database, s: State, fromSnapshot: boolean) {
  const bg = s.background!;
  const t0 = performance.now();
  const slabs = maxIdOf(sqlite);
  const w: Warming = {
    phase: fromSnapshot && bg.snapshotFile ? "opening" : "rebuilding",
    startedAt: t0,
    phaseStartedAt: t0,
    done: 0,
    total: 0,
    slabs,
    promise: Promise.resolve(),
  };
  s.warming = w;
  // Changes from here on are recorded and read again once the facts are in.
  s.dirtyAll = false;
  s.dirty.clear();
  const stopped = () => bg.closed;
  // How long each phase took, for the log line.
  const phasesMs: Record<string, number> = {};
  const nextPhase = (phase: Warming["phase"]) => {
    const now = performance.now();
    phasesMs[w.phase] = Math.round(now - w.phaseStartedAt);
    w.phase = phase;
    w.phaseStartedAt = now;
  };
  w.promise = (async () => {
    let facts: SlabFacts | null = null;
    let from = "the database";
    let why: string | null = null;
    removeStaleColumnFiles(columnDirOf(sqlite.name));
    if (fromSnapshot && bg.snapshotFile) {
      await removeStaleTemps(bg.snapshotFile);
      const r = await readSnapshot(sqlite, bg.snapshotFile, {
        capacityFor: buildCapacity,
        diskDir: columnDirOf(sqlite.name),
        stopped,
        progress: (phase, done, total) => {
          if (w.phase !== phase) nextPhase(phase);
          w.done = done;
          w.total = total;
        },
      });
      if (r.facts) {
        facts = r.facts;
        from = "the snapshot";
      } else why = r.reason;
    }
    if (!facts) {
      if (w.phase !== "rebuilding") nextPhase("rebuilding");
      w.done = 0;
      facts = await buildInSlices(sqlite, w, bg.sliceMs, stopped, s.facts, bg.logger);
    }
    if (bg.closed) {
      closeDisk(facts);
      return;
    }
    phasesMs[w.phase] = Math.round(performance.now() - w.phaseStartedAt);
    setFacts(s, facts);
    s.version++;
    if (from === "the snapshot") bg.savedVersion = s.version;
    bg.loaded = { from: from === "the snapshot" ? "snapshot" : "database", snapshotIgnored: why };
    s.warming = null;
    const kinds = columnKinds(facts);
    bg.logger?.info(
      {
        slabs: facts.size,
        ms: Math.round(performance.now() - t0),
        phasesMs,
        from,
        ...(why ? { snapshotIgnored: why } : {}),
        mb: Math.round(factsBytes(facts) / 1048576),
        float32Variables: kinds.float32.length,
        float64Variables: kinds.float64.length,
        ...(kinds.onDisk.length > 0 ? { variablesOnDisk: kinds.onDisk.length, diskMb: Math.round(diskBytes(facts) / 1048576) } : {}),
      },
      "report cache ready",
    );
    // REPORT_COLUMNS_MB set (an .env copied from an earlier .env.example has 256) and only some of the
    // columns fit: that costs memory for no report's speed at this size (report-cache-disk.ts).
    const budget = columnMemoryMb();
    const total = kinds.float32.length + kinds.float64.length;
    if (budget !== null && kinds.onDisk.length > 0 && kinds.onDisk.length < total) {
      bg.logger?.warn(
        { REPORT_COLUMNS_MB: budget, inMemory: total - kinds.onDisk.length, inFiles: kinds.onDisk.length },
        `REPORT_COLUMNS_MB=${budget} keeps ${total - kinds.onDisk.length} of ${total} condition columns in memory: some in memory made no report faster and cost memory (≈ 250 MB at five million slabs). Leave it empty to keep them all in memory while they fit in ${DEFAULT_COLUMNS_MB} MB, else all in files`,
      );
    }
    // A change it could not name came while loading: load again.
    if (s.dirtyAll) startWarming(sqlite, s, false);
  })()
    .catch((err) => {
      if (bg.closed) return;
      setFacts(s, null);
      s.dirtyAll = true;
      bg.logger?.error({ err }, "report cache could not be loaded; the next report tries again");
    })
    .finally(() => {
      if (s.warming === w) s.warming = null;
    });
}

export interface ReportCacheStatus {
  state: "warming" | "ready" | "stale";
  /** Where the facts came from when last loaded; why the snapshot was not used (none, out of date, damaged). */
  from: "snapshot" | "database" | null;
  snapshotIgnored: string | null;
  slabs: number | null;
}

export interface ReportCacheHandle {
  status(): ReportCacheStatus;
  /** Resolves when the facts are ready (or the load failed). */
  whenReady(): Promise<void>;
  /**
   * Writes the snapshot now when the facts are current and changed since the last one. `version`:
   * the change count the facts hold (writeSnapshot), when the caller knows it (the report thread).
   */
  saveSnapshot(version?: number): Promise<"written" | "unchanged" | "not ready">;
  /** Stops the periodic snapshots and writes the last one (at shutdown, after the last request). */
  close(version?: number): Promise<void>;
}

export interface ReportCacheOptions {
  snapshotFile: string | null;
  logger?: Logger;
  /** How often a snapshot is written when something changed (default 10 minutes); null: only when asked. */
  snapshotEveryMs?: number | null;
  sliceMs?: number;
}

/**
 * The running server's cache: loads it in the background (snapshot, else the database), writes a
 * snapshot every `snapshotEveryMs` when something changed and at `close()`.
 */
export function startReportCache(db: Db, opts: ReportCacheOptions): ReportCacheHandle {
  const sqlite = db.$client;
  const s = stateOf(sqlite);
  const link = links.get(sqlite);
  if (link) {
    // The thread holds the facts from now on; a copy built here (a test reading them) is dropped.
    setFacts(s, null);
    s.dirtyAll = true;
    s.dirty.clear();
    return link.startCache(opts);
  }
  const bg: Background = {
    snapshotFile: opts.snapshotFile,
    logger: opts.logger,
    closed: false,
    savedVersion: -1,
    writing: null,
    dataVersion: sqlite.pragma("data_version", { simple: true }) as number,
    sliceMs: opts.sliceMs ?? 20,
    loaded: null,
  };
  s.background = bg;
  setFacts(s, null);
  startWarming(sqlite, s, true);

  const save = async (fingerprintVersion?: number): Promise<"written" | "unchanged" | "not ready"> => {
    if (!bg.snapshotFile || bg.writing) return "not ready";
    if (s.warming || !s.facts || s.dirtyAll) return "not ready";
    if (!patched(sqlite, s, s.facts)) return "not ready";
    if (s.version === bg.savedVersion) return "unchanged";
    const version = s.version;
    const t = performance.now();
    bg.writing = writeSnapshot(sqlite, s.facts, bg.snapshotFile, fingerprintVersion)
      .then(({ bytes }) => {
        bg.savedVersion = version;
        opts.logger?.info({ mb: Math.round(bytes / 1048576), ms: Math.round(performance.now() - t) }, "report cache snapshot written");
      })
      .finally(() => (bg.writing = null));
    await bg.writing;
    return "written";
  };

  const timer =
    opts.snapshotEveryMs === null
      ? undefined
      : setInterval(
          () => {
            // Another connection (an import thread) tells its changes when it finishes; a snapshot is
            // written only after a whole period in which no other connection wrote, so it never misses one.
            const dv = sqlite.pragma("data_version", { simple: true }) as number;
            const quiet = dv === bg.dataVersion;
            bg.dataVersion = dv;
            if (quiet) void save().catch((err) => opts.logger?.error({ err }, "report cache snapshot failed"));
          },
          opts.snapshotEveryMs ?? 10 * 60_000,
        );
  timer?.unref();

  return {
    status: () => ({
      state: s.warming ? "warming" : s.facts && !s.dirtyAll ? "ready" : "stale",
      from: bg.loaded?.from ?? null,
      snapshotIgnored: bg.loaded?.snapshotIgnored ?? null,
      slabs: s.facts?.size ?? null,
    }),
    whenReady: async () => {
      while (s.warming) await s.warming.promise;
    },
    saveSnapshot: save,
    close: async (fingerprintVersion?: number) => {
      clearInterval(timer);
      if (bg.writing) await bg.writing.catch(() => undefined);
      try {
        await save(fingerprintVersion);
      } catch (err) {
        opts.logger?.error({ err }, "report cache snapshot at shutdown failed");
      }
      bg.closed = true;
      s.background = null;
    },
  };
}
