// Entry of the import worker threads (import-pool.ts) from the TypeScript sources; the compiled
// server's is import-worker-entry.ts. On Node 20 a worker thread does not get the module hooks that
// `tsx` registered on the main thread, so tsx's API is registered here (once per thread) before the
// TypeScript module is imported. (Named like the other threads' entries, *-entry.mjs: a sibling
// import-worker.mjs would be what bundlers and Vite find first for "./import-worker".)
import { fileURLToPath } from "node:url";
import { register } from "tsx/esm/api";

register({ tsconfig: fileURLToPath(new URL("../../tsconfig.json", import.meta.url)) });
const { runImportTask } = await import("./import-worker.ts");
export default runImportTask;
