// Entry of the import threads in the compiled server (build/server/import-worker.js): piscina calls
// the module's default export. A large workbook's reader thread (sheet-reader.ts) starts from this
// entry too, its job as workerData: it loads only the reader (read-thread.ts), reads, and ends.
// From the sources, import-thread-entry.mjs plays the import threads' part (it registers tsx first) and
// the reader thread runs a bundle of read-thread.ts.
import { workerData } from "node:worker_threads";
import { isReadJob, runReaderThread } from "./read-thread";

let handler: typeof import("./import-worker").runImportTask | undefined;
if (isReadJob(workerData)) await runReaderThread();
else handler = (await import("./import-worker")).runImportTask;
export default handler;
