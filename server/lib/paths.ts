import fs from "node:fs";
import path from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";

/**
 * The project folder (where package.json sits), found from this module's own place: the same from
 * the TypeScript sources (server/lib/paths.ts) and from the compiled server (build/server/*.js), so
 * the built client, the migrations and the upload defaults resolve alike in both.
 */
function findRoot(): string {
  let dir = path.dirname(fileURLToPath(import.meta.url));
  for (;;) {
    if (fs.existsSync(path.join(dir, "package.json"))) return dir;
    const up = path.dirname(dir);
    if (up === dir) throw new Error("Strandsight could not find its project folder (no package.json above the server's files).");
    dir = up;
  }
}

export const PROJECT_ROOT = findRoot();

/** Running the compiled server (build/server/*.js) rather than the TypeScript sources through tsx. */
export const COMPILED = !import.meta.url.endsWith(".ts");

/**
 * The compiled server's folder, where its entries sit (index.js, import-worker.js, report-thread.js).
 * Code compiled into a shared chunk (build/server/chunks/) must not find an entry beside itself.
 */
export const COMPILED_DIR = path.join(PROJECT_ROOT, "build", "server");

/** A thread's entry: the compiled one in COMPILED_DIR, or the small .mjs beside the sources' module. */
export const threadEntry = (compiled: string, source: string, sourceModuleUrl: string): URL =>
  COMPILED ? pathToFileURL(path.join(COMPILED_DIR, compiled)) : new URL(source, sourceModuleUrl);
