// Entry of the import threads in the compiled server (build/server/import-worker.js): piscina calls
// the module's default export. From the sources, import-worker.mjs plays this part (it registers tsx first).
export { runImportTask as default } from "./import-worker";
