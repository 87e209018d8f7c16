/**
 * index.html for a screen's address, naming that screen's code in the page.
 *
 * A screen's code is fetched by the app's first script only after that script has been downloaded
 * and run (a quarter of a second on a plant tablet), and a report's chart code only after the
 * screen's code. The server knows from the address which screen opens (shared/screens.ts), and from
 * the build's manifest (vite.config.ts `build.manifest`) which files that screen's module imports, so
 * it adds a `<link rel="modulepreload">` per file to the page it answers: the browser fetches them
 * beside the first script, and the router finds them in hand. What the page names already (the first
 * script's own imports) is not named twice; a report screen also names its chart code, and every
 * screen the catalogues its texts come from (shared/i18n/screen-texts.ts) in the reader's language
 * (with English, the fallback the client loads beside it) — otherwise they are asked for only once
 * the first script has run, a round trip after the screen's code.
 *
 * Each variant is built once, compressed once (brotli and gzip, as the build compresses index.html)
 * and kept; the build is read once at start, as the static files are. A build without a manifest
 * (or a screen the manifest does not hold) gets index.html as it is.
 *
 * Ours because the hints depend on our screen list; the HTML is only appended to (before </head>).
 */
import fs from "node:fs";
import path from "node:path";
import zlib from "node:zlib";
import type { Language } from "@shared/i18n/languages";
import { textsOf } from "@shared/i18n/screen-texts";
import { FRAME, type Screen, type ScreenMatch } from "@shared/screens";

interface ManifestEntry {
  file: string;
  src?: string;
  isEntry?: boolean;
  assets?: string[];
  imports?: string[];
  dynamicImports?: string[];
}
type Manifest = Record<string, ManifestEntry>;

export interface ScreenPage {
  html: Buffer;
  br: Buffer;
  gzip: Buffer;
}

/** Every file the given entries import, themselves included: breadth first, in the entries' order (the order they are named in). */
function closure(manifest: Manifest, keys: string[]): Set<string> {
  const into = new Set<string>();
  const queue = [...keys];
  for (let i = 0; i < queue.length; i++) {
    const key = queue[i]!;
    if (into.has(key) || !manifest[key]) continue;
    into.add(key);
    queue.push(...(manifest[key].imports ?? []));
  }
  return into;
}

const moduleKey = (module: string) => `src/app/routes/${module}.tsx`;

/**
 * The pages of one build: `pageFor(screenFor(pathname))` answers every address the app's router draws. A build
 * replaced or patched in place on a running server is seen at the next request (index.html and the
 * manifest are looked at — their size and time — on every page asked; the pages are built again).
 */
export function createScreenPages(clientDist: string) {
  const indexFile = path.join(clientDist, "index.html");
  const manifestFile = path.join(clientDist, ".vite", "manifest.json");
  const signature = () =>
    [indexFile, manifestFile]
      .map((f) => {
        const st = fs.statSync(f, { throwIfNoEntry: false });
        return st ? `${st.size}:${st.mtimeMs}` : "-";
      })
      .join("|");
  let built = "";
  let pages = new Map<string, ScreenPage>();
  let build: (screen: Screen, inFrame: boolean, charts: boolean, language: Language) => ScreenPage = () => {
    throw new Error("not loaded");
  };

  function load() {
    const base = fs.readFileSync(indexFile);
    let manifest: Manifest | null;
    try {
      manifest = JSON.parse(fs.readFileSync(manifestFile, "utf8")) as Manifest;
    } catch {
      manifest = null;
    }
    const entryKey = manifest ? Object.keys(manifest).find((k) => manifest![k]!.isEntry) : undefined;
    // The first script's own imports: index.html names them already.
    const named = manifest && entryKey ? closure(manifest, [entryKey]) : new Set<string>();
    const plain = compress(base);
    // The Latin faces of the four weights the screens use: asked for with the page, they are in hand
    // when the first screen is laid out, instead of arriving after it and laying it out again. (Latin
    // Extended and Greek stay on demand: few screens show them.)
    const fonts = entryKey ? (manifest![entryKey]!.assets ?? []).filter((f) => /\/noto-sans-latin-\d00-normal-[\w-]+\.woff2$/.test(f)) : [];
    pages = new Map();
    build = (screen, inFrame, charts, language) => {
      const key = moduleKey(screen.module);
      if (!manifest?.[key]) return plain;
      const keys = [...closure(manifest, [...(inFrame ? [moduleKey(FRAME.module)] : []), key])];
      // The screen's catalogues (the frame's `common` too, in a language other than English, whose
      // `common` is in the first script), in the reader's language and English; the pseudo-locale is
      // made from English in the browser.
      const namespaces = [...new Set([...(inFrame ? textsOf(FRAME.module) : []), ...textsOf(screen.module)])];
      const languages = language === "de" ? ["de", "en"] : ["en"];
      for (const lng of languages) for (const ns of lng === "en" ? namespaces : ["common", ...namespaces]) keys.push(`shared/i18n/locales/${lng}/${ns}.json`);
      // A report draws its charts as soon as its answer comes: their code (the chart modules the
      // screen imports on demand, and the chart library under them) is named too, last — for
      // someone whose role reads reports only (the chart library stays off the inspector's tablet).
      // Asked for at low priority: on a plant's Wi-Fi the chart library (the largest file) would
      // otherwise share the bandwidth with the first script and the screen's code the table waits for.
      const screenKeys = new Set(keys);
      if (screen.report && charts) keys.push(...closure(manifest, manifest[key].dynamicImports ?? []));
      const files = [...new Set(keys)]
        .filter((k) => manifest[k] && !named.has(k) && manifest[k].file.endsWith(".js"))
        .map((k) => ({ file: manifest[k]!.file, later: !screenKeys.has(k) }));
      const html = base.toString("utf8");
      const at = html.indexOf("</head>");
      if (!files.length || at < 0) return plain;
      const links = [
        ...fonts.map((f) => `\n    <link rel="preload" as="font" type="font/woff2" crossorigin href="/${f}">`),
        ...files.map((f) => `\n    <link rel="modulepreload" crossorigin href="/${f.file}"${f.later ? ' fetchpriority="low"' : ""}>`),
      ].join("");
      return compress(Buffer.from(`${html.slice(0, at)}${links}\n  ${html.slice(at)}`, "utf8"));
    };
  }

  return {
    /**
     * The page for the screen an address opens (`screenFor`; built on first use, then kept while
     * the build stays as it is); `mayReadReports`: the person asking may read reports (their chart
     * code is named); `language`: the one the screen will be shown in (its catalogues are named).
     */
    pageFor({ screen, inFrame }: ScreenMatch, { mayReadReports = false, language = "en" }: { mayReadReports?: boolean; language?: Language } = {}): ScreenPage {
      const now = signature();
      if (now !== built) {
        load();
        built = now;
      }
      const charts = !!screen.report && mayReadReports;
      // German names German catalogues; English and the pseudo-locale (made from English in the browser) the same page.
      const catalogues = language === "de" ? "de" : "en";
      const key = `${inFrame ? "frame:" : ""}${screen.module}${charts ? "+charts" : ""}:${catalogues}`;
      let page = pages.get(key);
      if (!page) pages.set(key, (page = build(screen, inFrame, charts, catalogues)));
      return page;
    },
  };
}

function compress(html: Buffer): ScreenPage {
  return {
    html,
    br: zlib.brotliCompressSync(html, { params: { [zlib.constants.BROTLI_PARAM_QUALITY]: zlib.constants.BROTLI_MAX_QUALITY } }),
    gzip: zlib.gzipSync(html, { level: zlib.constants.Z_BEST_COMPRESSION }),
  };
}
