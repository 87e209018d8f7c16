/**
 * A screening's tests shared out over the processor's cores. Each test (one condition, or one
 * categorical variable) reads the slab facts on its own and gives its row on its own, so helper
 * threads can work some of them while the calling thread works the rest: the facts sit on shared
 * memory (report-cache-columns.ts) and are read where they are, without a copy.
 *
 * - Every thread takes the next test not yet taken from a shared counter (Atomics), so a helper still
 *   starting or slowed down takes fewer, and the caller takes the rest. The caller never waits for a
 *   helper to start.
 * - A test is worked by the same code on the same values whichever thread takes it, so the numbers
 *   are identical to a screening in one thread (tests/server/screening-threads.test.ts compares them).
 * - The caller stays synchronous: it waits for the helpers' tests on the shared counter
 *   (Atomics.wait) and reads their rows from their ports (receiveMessageOnPort), so no change to the
 *   facts can come in between (the report thread applies changes only between reports).
 * - A helper that fails a test, dies or stalls costs time, not the answer: the caller works those
 *   tests itself (a helper that finished nothing for ten times the caller's slowest test, at least
 *   5 s, is given up), and the helper is replaced for the next screening.
 *
 * Only for large scopes (SCREENING_SHARED_FROM slabs in the server's settings, 100,000 by default:
 * below that a screening takes a few tenths of a second in one thread), a database in a file (a
 * helper opens it for the categories' names) and facts whose every column is on shared memory.
 * Helpers: SCREENING_THREADS, by default one fewer than the processor's cores, at most three, and
 * only as many as a quarter of the memory holds the working arrays of; 0 turns sharing off. They
 * start when the report thread's facts are in (or at the first large screening) and stop after ten
 * idle minutes. Written here because no well-kept pool runs synchronous work on shared memory from
 * a synchronous caller.
 */
import os from "node:os";
import { MessageChannel, receiveMessageOnPort, Worker, type MessagePort } from "node:worker_threads";
import { threadEntry } from "../../lib/paths";
import type { Language } from "@shared/i18n/languages";
import { currentLanguage } from "../../lib/words";
import type { SlabFacts } from "../report-cache-columns";
import { defaultedKeys } from "../report-thread-protocol";
import type { Db } from "../../db/client";
import type { Scanned } from "./scope";
import type { Grid } from "./adjusted";

/** Slots of the shared control array: the next test to take, and how many tests the helpers have finished. */
export const NEXT = 0;
export const FINISHED = 1;

export interface HelperData {
  results: MessagePort;
  nice: number;
}

export interface HelperJob {
  job: number;
  databaseFile: string;
  language: Language;
  /** The screening's query, as parsed (screening.ts reads it). */
  query: unknown;
  /** The query's lists the server filled in by default (report-thread-protocol.ts: a structured clone drops their mark). */
  defaulted: string[];
  facts: Omit<SlabFacts, "indexOf">;
  rows: Int32Array;
  affected: Uint8Array;
  /** The caller's numbering of the scope's heats, on shared memory (cluster-robust SEs), else null. */
  heats: { ids: Int32Array; count: number } | null;
  /** The caller's grids of the adjustment terms (the categorical ones, on shared memory; null for the others). */
  grids: (Grid | null)[];
  control: Int32Array;
  items: number;
}

/** A test's row (and the heat numberings and grids the helper made for it: none when it took the caller's), or why it failed. */
export type HelperResult = { job: number; index: number; row: unknown; scopeWork: number } | { job: number; index: number; failed: string };

/** By default one helper fewer than the processor's cores, at most three (and see memoryAllows). */
export const DEFAULT_SCREENING_THREADS = Math.max(0, Math.min(3, os.availableParallelism() - 1));

/**
 * Working memory of one thread while it screens, per slab of the facts: its row and pattern arrays,
 * the pages of its value and key arrays it writes, and its own heap (measured: 62 bytes per slab at
 * a million slabs before a helper took the caller's heat numbering and grids and the pass wrote only
 * the values the fits read; a helper now adds 27–35 bytes per slab at five million, 130–180 MB, with
 * glibc's allocator as npm start sets it).
 * Kept at the earlier figure as the bound.
 */
export const BYTES_PER_SLAB = 64;

/**
 * Helpers the machine's memory allows when the number was not set: together their working arrays
 * stay within a quarter of it.
 */
const memoryAllows = (slabs: number) => {
  // A container's limit where there is one (Node gives 2^64 where there is none).
  const limit = process.constrainedMemory?.();
  const memory = limit && limit > 0 ? Math.min(limit, os.totalmem()) : os.totalmem();
  return Math.floor(memory / 4 / (BYTES_PER_SLAB * Math.max(1, slabs)));
};
/** By default a screening is shared out from this many slabs in scope. */
export const DEFAULT_SHARED_FROM = 100_000;

export interface ScreeningThreadSettings {
  /** Helper threads a large screening uses (0: none); unset: DEFAULT_SCREENING_THREADS, as the memory allows. */
  threads: number | null;
  /** Slabs in scope from which a screening is shared out. */
  sharedFrom: number;
  /** The helpers' priority (nice): the report thread's own, so they too give way to the write path. */
  nice: number;
}

const settings: ScreeningThreadSettings = { threads: null, sharedFrom: DEFAULT_SHARED_FROM, nice: 0 };

/** Sets how screenings are shared out in this thread (the report thread: from the server's settings; tests). */
export function configureScreeningThreads(opts: Partial<ScreeningThreadSettings>) {
  if (opts.threads !== undefined) settings.threads = opts.threads;
  if (opts.sharedFrom !== undefined) settings.sharedFrom = opts.sharedFrom;
  if (opts.nice !== undefined) settings.nice = opts.nice;
}

/** The helpers a screening over facts of `slabs` slabs uses. */
export const helpersFor = (slabs: number) => settings.threads ?? Math.min(DEFAULT_SCREENING_THREADS, memoryAllows(slabs));

export const screeningThreadSettings = (): ScreeningThreadSettings => ({ ...settings });

const IDLE_MS = 10 * 60_000;

interface Helper {
  worker: Worker;
  results: MessagePort;
  broken: boolean;
  /** Its code is loaded and it listens (it says so once). */
  ready: boolean;
}

let pool: Helper[] = [];
/** Why helpers failed since the last screening (logged with it by the report thread). */
let failures: string[] = [];
let idle: NodeJS.Timeout | null = null;
let jobs = 0;

function spawn(): Helper {
  const { port1, port2 } = new MessageChannel();
  const data: HelperData = { results: port2, nice: settings.nice };
  const worker = new Worker(threadEntry("screening-helper.js", "./screening-helper-entry.mjs", import.meta.url), {
    workerData: data,
    transferList: [port2],
    // The facts and the working arrays are outside the heap; the heap holds a test's small objects.
    resourceLimits: { maxOldGenerationSizeMb: 256 },
  });
  // A helper never keeps a process alive.
  worker.unref();
  const helper: Helper = { worker, results: port1, broken: false, ready: false };
  worker.once("message", () => (helper.ready = true));
  worker.on("error", (err) => {
    helper.broken = true;
    failures.push(String((err as Error)?.message ?? err));
  });
  worker.on("exit", () => (helper.broken = true));
  return helper;
}

function stop(h: Helper): Promise<unknown> {
  h.broken = true;
  h.results.close();
  return h.worker.terminate().catch(() => undefined);
}
const retire = (h: Helper) => void stop(h);

/** Stops every helper (the report thread's end; tests). The next large screening starts them again. */
export async function stopScreeningHelpers() {
  const all = pool;
  pool = [];
  if (idle) clearTimeout(idle);
  idle = null;
  await Promise.all(all.map(stop));
}

function helpers(count: number): Helper[] {
  for (const h of pool) if (h.broken) retire(h);
  pool = pool.filter((h) => !h.broken);
  while (pool.length > count) retire(pool.pop()!);
  while (pool.length < count) pool.push(spawn());
  if (idle) idle.refresh();
  else {
    idle = setTimeout(() => void stopScreeningHelpers(), IDLE_MS);
    idle.unref();
  }
  return pool;
}

/** The helper threads now running (tests). */
export const screeningHelperThreads = (): Worker[] => pool.filter((h) => !h.broken).map((h) => h.worker);

/** Waits until `count` helpers have loaded their code and listen (tests, and a bench that wants them from the first screening). */
export async function startScreeningHelpers(count: number): Promise<void> {
  await Promise.all(
    helpers(count).map(
      (h) =>
        new Promise<void>((resolve, reject) => {
          if (h.broken) return reject(new Error("a screening helper stopped while starting"));
          if (h.ready) return resolve();
          // Held while waiting (an unreferenced thread alone would let the process end meanwhile).
          h.worker.ref();
          h.worker.once("message", () => {
            h.worker.unref();
            resolve();
          });
          h.worker.once("exit", () => reject(new Error("a screening helper stopped while starting")));
        }),
    ),
  );
}

/**
 * What a screening did: how many threads, how many tests the helpers worked, how many the caller
 * worked again for them, and why helpers failed (since the screening before).
 */
export interface Share {
  threads: number;
  byHelpers: number;
  /**
   * Heat numberings and grids of categorical adjustment terms the helpers made themselves instead of
   * taking the caller's, summed over the tests they worked (0 when every test took the caller's).
   */
  scopeWorkByHelpers: number;
  failedOver: number;
  failures: string[];
}
let lastShare: Share = { threads: 1, byHelpers: 0, scopeWorkByHelpers: 0, failedOver: 0, failures: [] };
/** What the last screening of this thread did (the report thread logs it; tests read it). */
export const lastScreeningShare = (): Share => ({ ...lastShare, failures: [...lastShare.failures] });

/** The caller's share, then the helpers' rows; a test a helper could not work is worked here. */
function work<T>(team: Helper[], job: HelperJob, out: T[], done: Uint8Array, own: (i: number) => T) {
  const { control, items: count } = job;
  // The caller's share: the next test not yet taken, until none is left.
  let slowest = 0;
  for (;;) {
    const i = Atomics.add(control, NEXT, 1);
    if (i >= count) break;
    const from = performance.now();
    out[i] = own(i);
    done[i] = 1;
    slowest = Math.max(slowest, performance.now() - from);
  }

  // The helpers' tests: their rows as they come.
  const redo: number[] = [];
  const read = () => {
    for (const h of team) {
      for (let m = receiveMessageOnPort(h.results); m; m = receiveMessageOnPort(h.results)) {
        const r = m.message as HelperResult;
        if (r.job !== job.job || done[r.index]) continue;
        if ("failed" in r) {
          redo.push(r.index);
          h.broken = true;
          lastShare.failures.push(r.failed);
        } else {
          out[r.index] = r.row as T;
          lastShare.byHelpers++;
          lastShare.scopeWorkByHelpers += r.scopeWork;
        }
        done[r.index] = 1;
      }
    }
  };
  // A helper that finishes nothing for this long has stopped (a thread that died cannot say so while
  // this one waits): its tests are worked here. A helper's test takes about as long as the caller's
  // (the same work, the same priority), so ten times the slowest, and at least 5 s.
  const patience = Math.max(5_000, 10 * slowest);
  let progressAt = performance.now();
  for (;;) {
    const finished = Atomics.load(control, FINISHED);
    read();
    if (done.every((d) => d === 1)) break;
    if (performance.now() - progressAt > patience) {
      for (let i = 0; i < count; i++) if (!done[i]) redo.push(i);
      for (const h of team) h.broken = true;
      lastShare.failures.push(`no helper finished a test in ${Math.round(patience)} ms`);
      break;
    }
    if (Atomics.wait(control, FINISHED, finished, 100) !== "timed-out") progressAt = performance.now();
  }
  for (const i of redo) {
    out[i] = own(i);
    lastShare.failedOver++;
  }
}

/**
 * The `count` tests of a screening, `own(i)` worked here and the rest by helper threads when the scope
 * is large; in the order of i, whoever worked them.
 */
export function shareOut<T>(
  ctx: { db: Db; sc: Scanned; q: unknown; heats?: HelperJob["heats"]; grids?: HelperJob["grids"] },
  count: number,
  own: (i: number) => T,
): T[] {
  const out = new Array<T>(count);
  const file = ctx.db.$client.name;
  const { indexOf: _byId, ...facts } = ctx.sc.facts;
  // Every column the facts hold, and the scope's rows and flags: one not on shared memory would be copied to each helper.
  const arrays = (
    [...Object.values(facts.vars), ...Object.values(facts), ctx.sc.rows, ctx.sc.affected, ctx.heats?.ids, ...(ctx.grids ?? []).map((g) => g?.keys)] as unknown[]
  ).filter((a) => ArrayBuffer.isView(a));
  const shareable = arrays.every((a) => a.buffer instanceof SharedArrayBuffer);
  // An in-memory (or temporary) database cannot be opened by a helper.
  const wanted = ctx.sc.rows.length >= Math.max(1, settings.sharedFrom) && !ctx.db.$client.memory && shareable ? helpersFor(facts.size) : 0;
  lastShare = { threads: 1, byHelpers: 0, scopeWorkByHelpers: 0, failedOver: 0, failures };
  failures = [];
  if (wanted === 0) {
    for (let i = 0; i < count; i++) out[i] = own(i);
    return out;
  }
  const team = helpers(wanted).slice();
  lastShare.threads = team.length + 1;
  const control = new Int32Array(new SharedArrayBuffer(8));
  const job: HelperJob = {
    job: ++jobs,
    databaseFile: file,
    language: currentLanguage(),
    query: ctx.q,
    defaulted: defaultedKeys(ctx.q),
    facts,
    rows: ctx.sc.rows,
    affected: ctx.sc.affected,
    heats: ctx.heats ?? null,
    grids: ctx.grids ?? [],
    control,
    items: count,
  };
  for (const h of team) h.worker.postMessage(job);

  const done = new Uint8Array(count);
  try {
    work(team, job, out, done, own);
  } finally {
    // Whatever happened here (a test that threw, helpers given up on), no helper takes a test of this
    // screening any more: the facts may change once it has returned.
    Atomics.store(control, NEXT, count);
  }
  return out;
}
