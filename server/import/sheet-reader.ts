/**
 * The import thread's side of a large workbook's reader thread (read-thread.ts): starts the thread,
 * and hands its header and its rows, a page of cells at a time, to the import as an async iterable,
 * so the import checks and writes one page while the thread reads the next (two cores at work
 * instead of one). The thread's heap is capped like the import thread's; a refusal comes back in the
 * reader's own words, and anything else that stops the thread as the import's usual answers.
 */
import path from "node:path";
import { fileURLToPath } from "node:url";
import { Worker } from "node:worker_threads";
import { HttpError, said } from "../lib/http-error";
import { COMPILED, PROJECT_ROOT, threadEntry } from "../lib/paths";
import { CellStore } from "./cell-store";
import { READER_ROLE, type FromReader, type ReadJob } from "./read-thread";
import type { Limits } from "./xlsx-sheet";

export type SheetEvent = { type: "header"; headers: string[]; date1904: boolean } | { type: "rows"; rows: CellStore };

export interface SheetReading extends AsyncIterable<SheetEvent> {
  /** Stops the thread (the import was refused or failed while the sheet was still being read). */
  stop(): Promise<void>;
}

/**
 * A workbook of heats or slabs this large (bytes on disk) is read in a thread of its own while the
 * rows already read are checked and written; a smaller one is read whole first (a thread's start,
 * some tens of milliseconds, is not worth it for a few thousand rows).
 */
export const STREAM_FROM_BYTES = 256 * 1024;

/** Cells sent at once: one CellStore page. */
export const READER_PAGE_CELLS = 65_536;

/** Anything a reader did not foresee in a file is still the file's fault, not the server's. */
export const fileNotRead = () => new HttpError(415, "unsupported_file", said("imports.fileNotRead"));

/** A thread of the import ran out of its heap. */
export const outOfMemory = (heapMb: number) => new HttpError(413, "import_too_large", said("imports.outOfMemory", { mb: heapMb }));

/**
 * The reader thread's young generation (MB). What it allocates dies young (the parser's strings, a
 * page's cells until sent), so a small nursery costs no measurable time (100,000 slab rows read in
 * the same time with 8 MB as with V8's default), and the import's peak RSS falls by some 15–20 MB.
 */
const READER_YOUNG_MB = 8;

let sourceBundle: Promise<string> | null = null;

/**
 * From the TypeScript sources, the reader thread runs read-thread.ts bundled by esbuild, once per
 * import thread and kept in memory: TypeScript in a thread would need tsx's loader registered there
 * (import-thread-entry.mjs does that for the import threads), which costs a hooks thread of its own,
 * about 35 MB and half a second per start. The compiled server starts the thread from its
 * import-worker.js entry instead (import-worker-entry.ts), which loads only the reader.
 */
async function bundledReader(): Promise<string> {
  // A name, not a literal: the compiled server's bundler must not take esbuild in (it is only needed here, from the sources).
  const esbuildName = "esbuild";
  const esbuild = (await import(esbuildName)) as typeof import("esbuild");
  const entry = fileURLToPath(new URL("./read-thread.ts", import.meta.url));
  const out = await esbuild.build({
    stdin: { contents: `import { runReaderThread } from ${JSON.stringify(entry)};\nvoid runReaderThread();\n`, resolveDir: path.dirname(entry), loader: "ts" },
    bundle: true,
    platform: "node",
    format: "cjs",
    target: "node20",
    tsconfig: path.join(PROJECT_ROOT, "tsconfig.json"),
    write: false,
    logLevel: "silent",
  });
  return out.outputFiles[0]!.text;
}

/** Readies the reader thread's code (from the sources: bundles it), so the first large import does not wait for it. */
export async function prepareSheetReader(): Promise<void> {
  if (COMPILED) return;
  sourceBundle ??= bundledReader().catch((err: unknown) => {
    sourceBundle = null;
    throw err;
  });
  await sourceBundle;
}

/** Reads the first sheet of the workbook at `file` in a thread of its own, under the limits. */
export async function readSheetInThread(file: string, limits: Limits, opts: { heapMb: number; pageCells?: number }): Promise<SheetReading> {
  const job: ReadJob = { role: READER_ROLE, file, limits, pageCells: opts.pageCells ?? READER_PAGE_CELLS };
  const options = { workerData: job, resourceLimits: { maxOldGenerationSizeMb: opts.heapMb, maxYoungGenerationSizeMb: READER_YOUNG_MB } };
  let worker: Worker;
  if (COMPILED) worker = new Worker(threadEntry("import-worker.js", "./import-thread-entry.mjs", import.meta.url), options);
  else {
    await prepareSheetReader();
    // No --import tsx and the like from the import thread's own start: the bundle is plain JavaScript.
    worker = new Worker(await sourceBundle!, { ...options, eval: true, execArgv: [] });
  }
  type Item = SheetEvent | { type: "end" } | { type: "error"; error: HttpError };
  const queue: Item[] = [];
  let wake: (() => void) | null = null;
  const push = (item: Item) => {
    queue.push(item);
    wake?.();
    wake = null;
  };
  worker.on("message", (m: FromReader) => {
    if (m.type === "header") push(m);
    else if (m.type === "rows") push({ type: "rows", rows: CellStore.attach(m.rows) });
    else if (m.type === "end") push(m);
    else if (m.type === "refused") push({ type: "error", error: new HttpError(m.status, m.code, m.said ?? m.message, m.details) });
    else push({ type: "error", error: fileNotRead() });
  });
  worker.on("error", (err: Error & { code?: string }) =>
    push({ type: "error", error: err.code === "ERR_WORKER_OUT_OF_MEMORY" ? outOfMemory(opts.heapMb) : fileNotRead() }),
  );
  // After "end" this is never read; before it, the thread stopped without saying why.
  worker.on("exit", () => push({ type: "error", error: fileNotRead() }));

  return {
    async *[Symbol.asyncIterator]() {
      for (;;) {
        while (queue.length === 0) await new Promise<void>((resolve) => (wake = resolve));
        const item = queue.shift()!;
        if (item.type === "end") return;
        if (item.type === "error") throw item.error;
        yield item;
      }
    },
    stop: async () => {
      await worker.terminate();
    },
  };
}
