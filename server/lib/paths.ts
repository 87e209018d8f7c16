import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";

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
