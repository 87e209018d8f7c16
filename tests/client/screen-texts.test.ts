import { existsSync, readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { textsOf } from "../../shared/i18n/screen-texts";
import { FRAME, IN_FRAME, OUTSIDE_FRAME } from "../../shared/screens";

/**
 * Every catalogue a screen's components read is fetched with the screen (shared/i18n/screen-texts.ts).
 * One that is not is fetched only when a component first asks for a text of it, and react-i18next
 * then suspends that component: the frame's Suspense boundary hides the whole screen behind a spinner
 * for a moment. On the review queue that happened when the first entry (its photo strip, in the
 * yard's words) arrived; what the quality engineer was typing into the slab filter at that moment
 * was lost (a browser test caught it on a busy machine).
 *
 * The check follows each screen module's imports through src/ and shared/ (code loaded later with
 * import() too: a chart waits behind its own spinner, but its texts should come with the screen) and
 * collects the namespaces named in useTranslation(...). A file read by hand, not a bundler's graph:
 * the app's imports are plain static strings.
 */
const ROOT = path.resolve(import.meta.dirname, "../..");
const EXTS = [".tsx", ".ts", "/index.tsx", "/index.ts"];

function resolve(from: string, spec: string): string | null {
  let base: string;
  if (spec.startsWith("@/")) base = path.join(ROOT, "src", spec.slice(2));
  else if (spec.startsWith("@shared/")) base = path.join(ROOT, "shared", spec.slice(8));
  else if (spec.startsWith(".")) base = path.resolve(path.dirname(from), spec);
  else return null; // a package
  if (/\.(json|css|svg|png|woff2?)$/.test(base)) return null;
  for (const ext of ["", ...EXTS]) {
    const file = base + ext;
    if (/\.tsx?$/.test(file) && existsSync(file)) return file;
  }
  throw new Error(`${path.relative(ROOT, from)} imports ${spec}, which is not found`);
}

const IMPORT = /(?:^|\n)\s*(?:import|export)\s+(?!type\s)(?:[^"';]*?\sfrom\s+)?["']([^"']+)["']|\bimport\(\s*["']([^"']+)["']\s*\)/g;
const NAMESPACES = /useTranslation\(\s*(\[[^\]]*\]|["'][^"']+["'])?\s*[,)]/g;

/** The catalogues read by `file` and everything it imports, each with a file that reads it. */
function catalogues(file: string, seen = new Set<string>(), found = new Map<string, string>()): Map<string, string> {
  if (seen.has(file)) return found;
  seen.add(file);
  const source = readFileSync(file, "utf8");
  for (const m of source.matchAll(NAMESPACES)) {
    const names = m[1] ? [...m[1].matchAll(/["']([^"']+)["']/g)].map((x) => x[1]!) : ["common"];
    for (const ns of names) if (!found.has(ns)) found.set(ns, path.relative(ROOT, file));
  }
  for (const m of source.matchAll(IMPORT)) {
    const next = resolve(file, (m[1] ?? m[2])!);
    if (next) catalogues(next, seen, found);
  }
  return found;
}

const routeFile = (module: string) => path.join(ROOT, "src/app/routes", `${module}.tsx`);

describe("the catalogues fetched with each screen", () => {
  it("when the import reader is pointed at the review queue's route, then it finds the yard's words its photo strip reads (the reader itself works)", () => {
    const found = catalogues(routeFile("quality-review"));
    expect(found.get("review")).toBe("src/app/routes/quality-review.tsx");
    expect(found.get("yard")).toMatch(/^src\/features\/defects\/components\/(photo-viewer|type-picker)\.tsx$/);
  });

  it("when any screen is drawn, then every catalogue its components read is among those fetched with it (nothing suspends the screen afterwards)", () => {
    const missing: Record<string, Record<string, string>> = {};
    for (const screen of [...OUTSIDE_FRAME, FRAME, ...IN_FRAME]) {
      const wanted = new Set(["common", ...textsOf(screen.module)]);
      const lacking = [...catalogues(routeFile(screen.module))].filter(([ns]) => !wanted.has(ns));
      if (lacking.length) missing[screen.module] = Object.fromEntries(lacking);
    }
    expect(missing).toEqual({});
  });
});
