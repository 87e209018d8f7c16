import fs from "node:fs/promises";
import path from "node:path";
import { promisify } from "node:util";
import zlib from "node:zlib";
import type { RequestHandler } from "express";

const CODINGS = [
  { coding: "br", ext: ".br", decode: promisify(zlib.brotliDecompress) },
  { coding: "gzip", ext: ".gz", decode: promisify(zlib.gunzip) },
] as const;

/**
 * Sends a pre-compressed copy (.br, .gz beside the file, written by the build) only while it still
 * holds the file's bytes. express-static-gzip looks at the folder once, at start, and then trusts the
 * copies; but a file can be replaced in place on a running server (a hand-patched sw.js, a partial
 * copy of a new build), and a stale copy would then be sent to every browser that accepts br or
 * gzip — the old service worker forever. Each copy is checked once for each version of the pair
 * (size and modification time of both; a copy made by `cp` has a new time of its own, so the times
 * alone cannot tell) by decoding it and comparing; when a copy is missing or differs, its coding is
 * taken out of the request's Accept-Encoding, so the plain file goes out. Ours because express-static-gzip has no
 * such check; it is small and runs before it.
 */
export function freshPrecompressed(root: string): RequestHandler {
  const base = path.resolve(root);
  const verdicts = new Map<string, { key: string; fresh: Promise<boolean> }>();

  /** false: the file is there and its copy is missing or holds other bytes. */
  async function isFresh(file: string, ext: string, decode: (b: Buffer) => Promise<Buffer>): Promise<boolean> {
    const [plain, copy] = await Promise.all([fs.stat(file).catch(() => null), fs.stat(file + ext).catch(() => null)]);
    // No such file: not ours to judge (another handler answers that address; a screen's address gets index.html).
    if (!plain?.isFile()) return true;
    if (!copy?.isFile()) return false;
    const key = `${plain.size}:${plain.mtimeMs}:${copy.size}:${copy.mtimeMs}`;
    const known = verdicts.get(file + ext);
    if (known?.key === key) return known.fresh;
    const fresh = Promise.all([fs.readFile(file), fs.readFile(file + ext).then(decode)]).then(
      ([a, b]) => a.equals(b),
      () => false,
    );
    verdicts.set(file + ext, { key, fresh });
    return fresh;
  }

  return async (req, _res, next) => {
    const accept = req.headers["accept-encoding"];
    if ((req.method !== "GET" && req.method !== "HEAD") || !accept) return next();
    let file: string;
    try {
      file = path.join(base, decodeURIComponent(req.path));
    } catch {
      return next(); // a malformed address: express-static-gzip answers it
    }
    if (!file.startsWith(base + path.sep)) return next();
    const stale: string[] = [];
    for (const c of CODINGS) if (new RegExp(`(^|,)\\s*${c.coding}\\b`, "i").test(accept) && !(await isFresh(file, c.ext, c.decode))) stale.push(c.coding);
    if (stale.length) {
      const kept = accept
        .split(",")
        .map((s) => s.trim())
        .filter((s) => s && !stale.includes(s.split(";")[0]!.trim().toLowerCase()));
      req.headers["accept-encoding"] = kept.length ? kept.join(", ") : "identity";
    }
    next();
  };
}
