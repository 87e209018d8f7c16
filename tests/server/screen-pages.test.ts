import fs from "node:fs";
import http from "node:http";
import path from "node:path";
import zlib from "node:zlib";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { FRAME, IN_FRAME, OUTSIDE_FRAME, screenFor } from "../../shared/screens";
import { CLIENT_DIST } from "../../server/app";
import { listenTestApp, type ListeningApp } from "../helpers/listening-app";
import { readManifest } from "../helpers/published-build";

/**
 * A screen's address is answered with index.html naming that screen's code (and, for a report, its
 * chart code) as `<link rel="modulepreload">`, and the Latin fonts as `<link rel="preload">`, so the
 * browser fetches them beside the first script (server/lib/screen-preload.ts). Runs on a copy of the
 * build, so that a test may patch index.html in place as a hand-patched deployment does.
 */
const published = await vi.hoisted(async () => (await import("../helpers/published-build")).publishBuildCopy("strandsight-screen-pages-"));

const manifest = () => readManifest(CLIENT_DIST);
const fileOf = (module: string) => manifest()[`src/app/routes/${module}.tsx`]!.file;
/** The file a shared chunk was written to, by its name ("chart-theme" → assets/chart-theme-<hash>.js). */
const chunk = (name: string) => Object.values(manifest()).find((m) => new RegExp(`^assets/${name}-[\\w-]+\\.js$`).test(m.file))!.file;

let app: ListeningApp;
let port: number;
const signIn = (role: string) => app.signIn(role);
beforeAll(async () => {
  app = await listenTestApp();
  port = app.port;
});
afterAll(async () => {
  await app?.close();
  fs.rmSync(published, { recursive: true, force: true });
});

function get(url: string, headers: Record<string, string> = { "accept-encoding": "br, gzip" }) {
  return new Promise<{ status: number; headers: http.IncomingHttpHeaders; html: string }>((resolve, reject) => {
    http
      .get({ host: "127.0.0.1", port, path: url, headers }, (res) => {
        const chunks: Buffer[] = [];
        res.on("data", (c: Buffer) => chunks.push(c));
        res.on("end", () => {
          const body = Buffer.concat(chunks);
          const enc = res.headers["content-encoding"];
          const plain = !body.length ? body : enc === "br" ? zlib.brotliDecompressSync(body) : enc === "gzip" ? zlib.gunzipSync(body) : body;
          resolve({ status: res.statusCode!, headers: res.headers, html: plain.toString("utf8") });
        });
      })
      .on("error", reject);
  });
}

const modulePreloads = (html: string) =>
  [...html.matchAll(/<link rel="modulepreload" crossorigin href="\/([^"]+)"(?: fetchpriority="low")?>/g)].map((m) => m[1]!);
/** The files named to be fetched after the others (the chart code). */
const lowPriority = (html: string) => [...html.matchAll(/<link rel="modulepreload" crossorigin href="\/([^"]+)" fetchpriority="low">/g)].map((m) => m[1]!);
const fontPreloads = (html: string) => [...html.matchAll(/<link rel="preload" as="font" type="font\/woff2" crossorigin href="\/([^"]+)">/g)].map((m) => m[1]!);
const LATIN = /^assets\/noto-sans-latin-(400|500|600|700)-normal-[\w-]+\.woff2$/;

describe("a screen's page names the screen's code", () => {
  it("when a quality engineer opens a report's address, then its page names the frame, the report's module, the report loader's module and the chart library, each file once, after what index.html names itself", async () => {
    const { status, headers, html } = await get("/reports/overview?period=month", { "accept-encoding": "br, gzip", cookie: await signIn("quality") });
    expect(status).toBe(200);
    expect(headers["content-type"]).toMatch(/^text\/html/);
    expect(headers["cache-control"]).toBe("no-cache");
    const named = modulePreloads(html);
    expect(named).toContain(fileOf("app-layout"));
    expect(named).toContain(fileOf("report-overview"));
    expect(named).toContain(manifest()["src/app/report-frame.tsx"]!.file);
    expect(named).toContain(chunk("chart-theme"));
    expect(named).toContain(chunk("report-chart"));
    // The frame and the screen before the charts: fetched first, and the chart code at low priority
    // (it would otherwise share a Wi-Fi's bandwidth with the code the first table waits for).
    expect(named.indexOf(fileOf("report-overview"))).toBeLessThan(named.indexOf(chunk("chart-theme")));
    const low = lowPriority(html);
    expect(low).toContain(chunk("chart-theme"));
    expect(low).toContain(chunk("report-chart"));
    for (const f of [fileOf("app-layout"), fileOf("report-overview"), manifest()["src/app/report-frame.tsx"]!.file]) expect(low).not.toContain(f);
    expect(named.slice(named.length - low.length)).toEqual(low);
    expect(new Set(named).size).toBe(named.length);
    // index.html's own modulepreloads and script are there once, untouched.
    const built = fs.readFileSync(path.join(CLIENT_DIST, "index.html"), "utf8");
    for (const f of modulePreloads(built)) expect(named.filter((x) => x === f)).toHaveLength(1);
    const entry = Object.values(manifest()).find((m) => m.isEntry)!;
    expect(named).not.toContain(entry.file);
    // Every file named exists and is served.
    for (const f of named) expect(fs.existsSync(path.join(CLIENT_DIST, f)), f).toBe(true);
    const fonts = fontPreloads(html);
    expect(fonts).toHaveLength(4);
    for (const f of fonts) expect(f).toMatch(LATIN);
    // index.html as built, to the byte, with only these lines added just before </head>.
    const head = built.indexOf("</head>");
    expect(html.startsWith(built.slice(0, head))).toBe(true);
    expect(html.endsWith(built.slice(head))).toBe(true);
    const middle = html.slice(head, html.length - (built.length - head));
    expect(
      middle.replace(
        /\n {4}<link rel="(?:modulepreload" crossorigin|preload" as="font" type="font\/woff2" crossorigin) href="\/assets\/[^"]+"(?: fetchpriority="low")?>/g,
        "",
      ),
    ).toBe("\n  ");
  });

  it("when an inspector or nobody signed in opens a report's address, then the page names the report's module but no chart code (the screen will refuse them)", async () => {
    for (const cookie of [await signIn("inspector"), undefined]) {
      const named = modulePreloads((await get("/reports/overview", cookie ? { cookie } : {})).html);
      expect(named).toContain(fileOf("report-overview"));
      expect(named).not.toContain(chunk("chart-theme"));
      expect(named).not.toContain(chunk("report-chart"));
    }
  });

  it("when the heats list is opened, then its page names the frame and the heats module, and no chart code", async () => {
    const { html } = await get("/heats");
    const named = modulePreloads(html);
    expect(named).toContain(fileOf("app-layout"));
    expect(named).toContain(fileOf("heats"));
    expect(named).toContain(manifest()["src/features/heats/api/heats.queries.ts"]!.file);
    expect(named).not.toContain(chunk("chart-theme"));
    expect(named).not.toContain(fileOf("report-overview"));
    expect(lowPriority(html)).toEqual([]);
  });

  it("when a screen is opened, then its page names the screen's catalogues in the reader's language, with English beside German (the fallback), after the screen's code", async () => {
    const catalogue = (lng: string, ns: string) => manifest()[`shared/i18n/locales/${lng}/${ns}.json`]!.file;
    const english = modulePreloads((await get("/heats")).html);
    expect(english).toContain(catalogue("en", "heats"));
    // English `common` is in the first script; German is not asked for.
    expect(english.filter((f) => Object.values(manifest()).some((m) => m.file === f && m.src?.includes("/locales/de/")))).toEqual([]);
    expect(english.indexOf(fileOf("heats"))).toBeLessThan(english.indexOf(catalogue("en", "heats")));

    const german = modulePreloads((await get("/heats", { "accept-encoding": "br, gzip", "accept-language": "de-DE,de;q=0.9" })).html);
    for (const f of [catalogue("de", "common"), catalogue("de", "heats"), catalogue("en", "heats")]) expect(german).toContain(f);

    // A report screen: its catalogue before the chart code.
    const report = modulePreloads((await get("/reports/overview?period=month", { "accept-encoding": "br, gzip", cookie: await signIn("quality") })).html);
    expect(report).toContain(catalogue("en", "reports"));
    expect(report.indexOf(catalogue("en", "reports"))).toBeLessThan(report.indexOf(chunk("chart-theme")));
    // The server's own catalogues are not in the client's build at all.
    expect(Object.keys(manifest()).filter((k) => /\/(server|methods|audit)\.json$/.test(k))).toEqual([]);
  });

  it("when the sign-in page is opened, then it names the sign-in module and not the frame (nobody is signed in there yet)", async () => {
    const { html } = await get("/sign-in?next=%2Fyard");
    const named = modulePreloads(html);
    expect(named).toContain(fileOf("sign-in"));
    expect(named).not.toContain(fileOf("app-layout"));
  });

  it("when addresses with a parameter are opened, then a static segment outranks a parameter as in the router, and an unknown address names the not-found screen", async () => {
    expect(modulePreloads((await get("/claims/new")).html)).toContain(fileOf("claim-new"));
    expect(modulePreloads((await get("/claims/new")).html)).not.toContain(fileOf("claim"));
    expect(modulePreloads((await get("/claims/12")).html)).toContain(fileOf("claim"));
    expect(modulePreloads((await get("/heats/L260001/history")).html)).toContain(fileOf("heat-history"));
    expect(modulePreloads((await get("/heats/L260001")).html)).toContain(fileOf("heat"));
    const unknown = modulePreloads((await get("/no/such/screen")).html);
    expect(unknown).toContain(fileOf("not-found"));
    expect(unknown).toContain(fileOf("app-layout"));
  });

  it("when the page is asked again with its ETag, then the answer is 304 with no body", async () => {
    const first = await get("/yard");
    const again = await get("/yard", { "accept-encoding": "br, gzip", "if-none-match": String(first.headers.etag) });
    expect(again.status).toBe(304);
    expect(again.html).toBe("");
  });

  it("when index.html is patched in place on the running server, then the next page carries the patch", async () => {
    const file = path.join(CLIENT_DIST, "index.html");
    const before = fs.readFileSync(file, "utf8");
    fs.writeFileSync(file, before.replace("<title>Strandsight</title>", "<title>Strandsight (patched)</title>"));
    try {
      const { html } = await get("/heats");
      expect(html).toContain("<title>Strandsight (patched)</title>");
      expect(modulePreloads(html)).toContain(fileOf("heats"));
    } finally {
      fs.writeFileSync(file, before);
    }
    expect((await get("/heats")).html).toContain("<title>Strandsight</title>");
  });
});

describe("a screen's first data request is named with its page", () => {
  const linkOf = (headers: http.IncomingHttpHeaders) => headers.link as string | undefined;
  const preload = (url: string) => `<${url}>; rel=preload; as=fetch; crossorigin`;

  it("when a quality engineer opens a report, then the page's Link header names the report's request exactly as the screen asks it (canonical order, defaults filled), and that request answers", async () => {
    const cookie = await signIn("quality");
    expect(linkOf((await get("/reports/overview", { cookie })).headers)).toBe(preload("/api/reports/overview?period=week"));
    // Filters first in their fixed order, then the report's own keys; unknown keys dropped, values trimmed.
    const { headers } = await get("/reports/rate-by-variable?bins=5&grade=LV-ST32&junk=1&defectType=%20SLG%20", { cookie });
    const url = "/api/reports/rate-by-variable?grade=LV-ST32&defectType=SLG&variable=casting_speed_m_min&bins=5&binning=equal&minN=30";
    expect(linkOf(headers)).toBe(preload(url));
    const res = await fetch(`http://127.0.0.1:${port}${url}`, { headers: { cookie } });
    expect(res.status).toBe(200);
    expect(res.headers.get("content-type")).toMatch(/^application\/json/);
  });

  it("when the heats list is opened with a sort and a search, then its request is named with the list's parameters in the client's order", async () => {
    const cookie = await signIn("claims");
    expect(linkOf((await get("/heats", { cookie })).headers)).toBe(preload("/api/heats"));
    expect(linkOf((await get("/heats?sort=gradeCode&q=L26&page=2&pageSize=25", { cookie })).headers)).toBe(preload("/api/heats?q=L26&sort=gradeCode&page=2"));
  });

  it("when someone whose role may not read it, or nobody, opens the screen, or a screen without a first request is opened, then no request is named", async () => {
    const inspector = await signIn("inspector");
    expect(linkOf((await get("/reports/overview", { cookie: inspector })).headers)).toBeUndefined();
    expect(linkOf((await get("/heats", { cookie: inspector })).headers)).toBeUndefined();
    expect(linkOf((await get("/reports/overview")).headers)).toBeUndefined();
    expect(linkOf((await get("/yard", { cookie: inspector })).headers)).toBeUndefined();
    expect(linkOf((await get("/reports", { cookie: await signIn("quality") })).headers)).toBeUndefined();
  });
});

describe("the list of screens and the build agree", () => {
  it("every screen in shared/screens.ts has its module in the build, and every route module of the build is a screen in the list", () => {
    const listed = new Set([FRAME, ...OUTSIDE_FRAME, ...IN_FRAME].map((s) => s.module));
    for (const m of listed) expect(manifest()[`src/app/routes/${m}.tsx`], m).toBeDefined();
    const onDisk = fs
      .readdirSync(path.resolve("src/app/routes"))
      .filter((f) => f.endsWith(".tsx") && f !== "route-error.tsx")
      .map((f) => f.replace(/\.tsx$/, ""));
    expect([...listed].sort()).toEqual(onDisk.sort());
  });

  it("addresses resolve to the screen the router draws (static before parameter, * last, trailing slash ignored)", () => {
    expect(screenFor("/").screen.module).toBe("home");
    expect(screenFor("/yard/").screen.module).toBe("yard");
    expect(screenFor("/yard/slabs/L1-101").screen.module).toBe("yard-slab");
    expect(screenFor("/investigations/new").screen.module).toBe("investigation-new");
    expect(screenFor("/investigations/7").screen.module).toBe("investigation");
    expect(screenFor("/reset-password").inFrame).toBe(false);
    expect(screenFor("/reports/nothing").screen.module).toBe("not-found");
  });
});
