import fs from "node:fs";
import os from "node:os";
import path from "node:path";

/**
 * A copy of the built client (without source maps) that the server under test serves, so that a
 * test may change a file in place the way a hand-patched deployment does. Call it from `vi.hoisted`,
 * before server/app reads STRANDSIGHT_CLIENT_DIST: `await vi.hoisted(async () => (await
 * import("../helpers/published-build")).publishBuildCopy("name-"))`.
 */
export function publishBuildCopy(prefix: string): string {
  const from = path.resolve(process.env.STRANDSIGHT_CLIENT_DIST ?? "dist");
  const to = fs.mkdtempSync(path.join(os.tmpdir(), prefix));
  fs.cpSync(from, to, { recursive: true, filter: (src) => !src.endsWith(".map") });
  process.env.STRANDSIGHT_CLIENT_DIST = to;
  return to;
}

/** One entry of the build's manifest (vite.config.ts `build.manifest`). */
export interface ManifestEntry {
  file: string;
  src?: string;
  isEntry?: boolean;
  imports?: string[];
  dynamicImports?: string[];
  css?: string[];
  assets?: string[];
}

export const readManifest = (dist: string) => JSON.parse(fs.readFileSync(path.join(dist, ".vite", "manifest.json"), "utf8")) as Record<string, ManifestEntry>;
