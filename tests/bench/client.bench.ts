/**
 * `npm run bench:client` (part of `npm run bench`, as "client") — how fast a screen opens on a device
 * that has never seen the app: the real server with the demo plant and the built client, Chromium,
 * signed in as the quality engineer, a new browser context (empty cache) for every load.
 *
 * Two screens: the overview report (a table and a chart) and the heats list (a table only), each
 * loaded BENCH_CLIENT_RUNS times (default 10). Measured in the page by the browser's own clock, from
 * navigation start to
 *   - the first table row in the page with a height (looked for in every frame),
 *   - the first report chart's canvas with something drawn on it (its pixels, checked every frame),
 * with the bytes the page fetched by then (on the wire, and after decoding), and when the session
 * (`/api/me`) and the screen's data were asked for, beside when the screen's code had arrived — the
 * browser's Resource Timing, so the overlap is the browser's own record.
 *
 * The floor, in the same run: a bare static HTML page with one table row, served by the same express
 * app; the ratio says how far a screen is from what the network and the browser alone cost.
 * Both on plain localhost and on a good plant Wi-Fi emulated by Chromium (20 ms round trip,
 * 20 Mbit/s each way, as the yard bench); BENCH_CLIENT_NETWORK=local or wifi runs one of them.
 * Targets: first table < 1 s, chart < 1.5 s (p50). Nothing here asserts time.
 *
 * Needs the built client (`npm run build`, or STRANDSIGHT_CLIENT_DIST pointing at a build); the
 * bench works on a copy of it in a temp folder, with the floor page added there. BENCH_CLIENT_TRACE=1
 * prints every request of every load (start → end, bytes on the wire / decoded).
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import type { Browser, BrowserContextOptions } from "playwright-core";

const RUNS = Number(process.env.BENCH_CLIENT_RUNS ?? 10);
const SCALE = Number(process.env.BENCH_CLIENT_SCALE ?? 1);
const NETWORKS = (process.env.BENCH_CLIENT_NETWORK ? [process.env.BENCH_CLIENT_NETWORK] : ["local", "wifi"]) as ("local" | "wifi")[];
export const TARGET_TABLE_MS = 1000;
export const TARGET_CHART_MS = 1500;

const SOURCE_DIST = process.env.STRANDSIGHT_CLIENT_DIST ? path.resolve(process.env.STRANDSIGHT_CLIENT_DIST) : path.resolve("dist");
const FLOOR_PAGE = "bench-floor.html";

const quantile = (xs: number[], q: number) => {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.ceil(q * s.length) - 1)]!;
};

/**
 * Installed before any script of the page: stamps the first table row and the first drawn chart.
 * A string, not a function: tsx adds name helpers to functions that the page does not have.
 */
const PROBE = `(() => {
  const t = { row: 0, chart: 0 };
  window.__firstPaint = t;
  const drawn = (c) => {
    if (!c.width || !c.height) return false;
    const ctx = c.getContext("2d");
    if (!ctx) return false;
    const px = new Uint32Array(ctx.getImageData(0, 0, c.width, c.height).data.buffer);
    for (let i = 0; i < px.length; i += 7) if (px[i] !== 0) return true;
    return false;
  };
  // Looked for in every frame (rows can be drawn into a table that was hidden, which no DOM change
  // tells), stamped with the time the frame began: what is there then is painted in that frame.
  const frame = (now) => {
    if (!t.row) {
      const r = document.querySelector("tbody tr");
      if (r && r.getBoundingClientRect().height > 0) t.row = now;
    }
    if (!t.chart) {
      const c = document.querySelector('[role="img"] canvas');
      if (c && drawn(c)) t.chart = now;
    }
    if (!t.row || !t.chart) requestAnimationFrame(frame);
  };
  requestAnimationFrame(frame);
})()`;

interface Load {
  rowMs: number;
  chartMs: number;
  /** Body bytes of every request so far: on the wire, and after decoding. */
  wire: number;
  decoded: number;
  jsFiles: number;
  jsWire: number;
  jsDecoded: number;
  /** /api/me: how many requests, and when the first started (ms from navigation start). */
  meCount: number;
  meStartMs: number;
  /** The screen's own data request started, and the screen's code (its route chunk) arrived. */
  dataStartMs: number;
  routeCodeEndMs: number;
  mainScriptEndMs: number;
}

interface Screen {
  name: string;
  path: string;
  chart: boolean;
  /** The screen's data request (its path starts so) and its route chunk (file name starts so). */
  dataPath: string;
  routeChunk: string;
}

const SCREENS: Screen[] = [
  { name: "overview report (table + chart)", path: "/reports/overview", chart: true, dataPath: "/api/reports/overview", routeChunk: "report-overview-" },
  { name: "heats list (table)", path: "/heats", chart: false, dataPath: "/api/heats", routeChunk: "heats-" },
];

async function loadOnce(
  browser: Browser,
  ctxOptions: BrowserContextOptions,
  url: string,
  network: "local" | "wifi",
  screen: Pick<Screen, "chart" | "dataPath" | "routeChunk">,
): Promise<Load> {
  const context = await browser.newContext(ctxOptions);
  try {
    await context.addInitScript(PROBE);
    const page = await context.newPage();
    page.setDefaultTimeout(60_000);
    if (network === "wifi") {
      const cdp = await context.newCDPSession(page);
      await cdp.send("Network.enable");
      await cdp.send("Network.emulateNetworkConditions", { offline: false, latency: 20, downloadThroughput: (20e6 / 8) | 0, uploadThroughput: (20e6 / 8) | 0 });
    }
    const said: string[] = [];
    page.on("console", (m) => void (m.type() === "error" && said.push(m.text())));
    page.on("pageerror", (e) => void said.push(String(e)));
    await page.goto(url, { waitUntil: "commit" });
    await page
      .waitForFunction(
        (chart) => {
          const t = (window as unknown as { __firstPaint?: { row: number; chart: number } }).__firstPaint;
          return !!t && t.row > 0 && (!chart || t.chart > 0);
        },
        screen.chart,
        { timeout: 60_000, polling: 50 },
      )
      .catch(async (err) => {
        await page.screenshot({ path: path.join(os.tmpdir(), "strandsight-bench-client-failed.png") }).catch(() => undefined);
        throw new Error(
          `${url}: the table${screen.chart ? " or the chart" : ""} did not show within 60 s (screenshot in ${os.tmpdir()}); the page said: ${said.join(" | ") || "nothing"}`,
          { cause: err },
        );
      });
    const got = (await page.evaluate(`(() => {
      const nav = performance.getEntriesByType("navigation")[0];
      const res = performance.getEntriesByType("resource");
      const all = [nav, ...res].map((e) => ({ name: e.name, start: e.startTime, end: e.responseEnd, wire: e.encodedBodySize, decoded: e.decodedBodySize }));
      return { t: window.__firstPaint, all };
    })()`)) as { t: { row: number; chart: number }; all: { name: string; start: number; end: number; wire: number; decoded: number }[] };
    if (process.env.BENCH_CLIENT_TRACE) {
      console.log(`    trace ${url}: row ${got.t.row.toFixed(0)} chart ${got.t.chart.toFixed(0)}`);
      for (const e of [...got.all].sort((a, b) => a.start - b.start))
        console.log(
          `      ${e.start.toFixed(0).padStart(6)} → ${e.end.toFixed(0).padStart(6)} ms  ${String(e.wire).padStart(8)} / ${String(e.decoded).padStart(8)} B  ${new URL(e.name).pathname}`,
        );
    }
    const js = got.all.filter((e) => /\.js(\?|$)/.test(new URL(e.name).pathname));
    const me = got.all.filter((e) => new URL(e.name).pathname === "/api/session");
    const data = got.all.filter((e) => new URL(e.name).pathname.startsWith(screen.dataPath));
    const route = js.filter((e) => path.basename(new URL(e.name).pathname).startsWith(screen.routeChunk));
    const main = js.filter((e) => /^index-[\w-]+\.js$/.test(path.basename(new URL(e.name).pathname)));
    const sum = (xs: typeof got.all, k: "wire" | "decoded") => xs.reduce((n, e) => n + e[k], 0);
    return {
      rowMs: got.t.row,
      chartMs: got.t.chart,
      wire: sum(got.all, "wire"),
      decoded: sum(got.all, "decoded"),
      jsFiles: js.length,
      jsWire: sum(js, "wire"),
      jsDecoded: sum(js, "decoded"),
      meCount: me.length,
      meStartMs: me.length ? Math.min(...me.map((e) => e.start)) : NaN,
      dataStartMs: data.length ? Math.min(...data.map((e) => e.start)) : NaN,
      routeCodeEndMs: route.length ? Math.max(...route.map((e) => e.end)) : NaN,
      mainScriptEndMs: main.length ? Math.min(...main.map((e) => e.end)) : NaN,
    };
  } finally {
    await context.close();
  }
}

const ms = (x: number) => `${x.toFixed(0)} ms`;
const kb = (x: number) => `${(x / 1024).toFixed(0)} kB`;

async function main() {
  if (!fs.existsSync(path.join(SOURCE_DIST, "index.html"))) {
    console.error(`No built client in ${SOURCE_DIST}: run \`npm run build\` first (or set STRANDSIGHT_CLIENT_DIST).`);
    process.exit(1);
  }
  // A copy of the build with the floor page beside it: someone else's build is never written to.
  const dist = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-bench-client-"));
  fs.cpSync(SOURCE_DIST, dist, { recursive: true });
  fs.writeFileSync(
    path.join(dist, FLOOR_PAGE),
    `<!doctype html><html lang="en"><head><meta charset="UTF-8"><title>Floor</title></head><body><table><tbody><tr><td>Floor</td></tr></tbody></table></body></html>`,
  );
  process.env.STRANDSIGHT_CLIENT_DIST = dist;
  // Imported only now: server/app reads STRANDSIGHT_CLIENT_DIST when it loads.
  const { startTestServer, TEST_PASSWORD } = await import("../helpers/test-app");
  const { DESKTOP, launchBrowser, signInAs } = await import("../helpers/browser");

  console.log(`Cold loads in Chromium: demo plant at scale ${SCALE}, ${RUNS} loads per screen, built client from ${SOURCE_DIST}`);
  const server = await startTestServer({ scale: SCALE });
  const browser = await launchBrowser();
  try {
    // Signed in once; every load then starts from that cookie alone, with an empty cache.
    const signIn = await browser.newContext({ viewport: DESKTOP });
    const signInPage = await signIn.newPage();
    await signInAs(signInPage, server.baseUrl, "quality", TEST_PASSWORD);
    const storageState = await signIn.storageState();
    await signIn.close();
    const ctxOptions: BrowserContextOptions = { viewport: DESKTOP, storageState };

    // Each load's report worked out, not the answer the report thread kept from the load before
    // (report-answers.ts): a write that changes nothing a report reads (a saved report, added and
    // taken away) moves the database on first.
    const sqlite = server.db.$client;
    const quality = sqlite.prepare("select id from user where email = 'quality@demo.test'").pluck().get() as string;
    const fresh = () => {
      const id = sqlite
        .prepare("insert into saved_reports (user_id, name, report_kind, query, created_at, updated_at) values (?, 'bench', 'overview', '', 0, 0)")
        .run(quality).lastInsertRowid;
      sqlite.prepare("delete from saved_reports where id = ?").run(id);
    };
    // The server's own caches warm once, so that every load measured is the client's and the network's.
    for (const s of SCREENS) await loadOnce(browser, ctxOptions, server.baseUrl + s.path, "local", s);

    for (const network of NETWORKS) {
      const label = network === "wifi" ? "wifi" : "local";
      console.log(`\n── network: ${network === "wifi" ? "good plant Wi-Fi (20 ms, 20 Mbit/s, emulated)" : "localhost"} ──`);
      const floor: number[] = [];
      for (let i = 0; i < RUNS; i++) {
        floor.push((await loadOnce(browser, ctxOptions, `${server.baseUrl}/${FLOOR_PAGE}`, network, { chart: false, dataPath: "/-", routeChunk: "-" })).rowMs);
      }
      const floorP50 = quantile(floor, 0.5);
      console.log(`floor: bare static page, its row painted   p50 ${ms(floorP50)}  p95 ${ms(quantile(floor, 0.95))}`);
      for (const s of SCREENS) {
        const loads: Load[] = [];
        for (let i = 0; i < RUNS; i++) {
          fresh();
          const l = await loadOnce(browser, ctxOptions, server.baseUrl + s.path, network, s);
          loads.push(l);
          console.log(
            `  ${s.name} #${i + 1}: table ${ms(l.rowMs)}${s.chart ? `, chart ${ms(l.chartMs)}` : ""}; /api/me ×${l.meCount} at ${ms(l.meStartMs)}, main script in at ${ms(l.mainScriptEndMs)}, ` +
              `screen code in at ${ms(l.routeCodeEndMs)}, its data asked at ${ms(l.dataStartMs)}`,
          );
        }
        const row = loads.map((l) => l.rowMs);
        const p = (xs: number[], q: number) =>
          quantile(
            xs.filter((x) => Number.isFinite(x)),
            q,
          );
        const tableP50 = p(row, 0.5);
        const key = s.chart ? "overview" : "heats";
        console.log(
          `client summary ${label} ${key}: first table p50 ${ms(tableP50)} p95 ${ms(p(row, 0.95))} (${(tableP50 / floorP50).toFixed(1)}× the static floor ${ms(floorP50)}) target < ${TARGET_TABLE_MS} ms ${tableP50 < TARGET_TABLE_MS ? "met" : "NOT met"}`,
        );
        if (s.chart) {
          const chart = loads.map((l) => l.chartMs);
          const chartP50 = p(chart, 0.5);
          console.log(
            `client summary ${label} ${key}: chart drawn p50 ${ms(chartP50)} p95 ${ms(p(chart, 0.95))} target < ${TARGET_CHART_MS} ms ${chartP50 < TARGET_CHART_MS ? "met" : "NOT met"}`,
          );
        }
        const l0 = loads[loads.length - 1]!;
        console.log(
          `client summary ${label} ${key}: bytes ${kb(
            p(
              loads.map((l) => l.wire),
              0.5,
            ),
          )} on the wire of ${kb(
            p(
              loads.map((l) => l.decoded),
              0.5,
            ),
          )} decoded; JS ${l0.jsFiles} files ${kb(l0.jsWire)} of ${kb(l0.jsDecoded)}`,
        );
        console.log(
          `client summary ${label} ${key}: /api/me asked p50 ${ms(
            p(
              loads.map((l) => l.meStartMs),
              0.5,
            ),
          )} after navigation start (${Math.max(...loads.map((l) => l.meCount))} request(s) at most); ` +
            `main script in ${ms(
              p(
                loads.map((l) => l.mainScriptEndMs),
                0.5,
              ),
            )}; screen data asked ${ms(
              p(
                loads.map((l) => l.dataStartMs),
                0.5,
              ),
            )}, screen code in ${ms(
              p(
                loads.map((l) => l.routeCodeEndMs),
                0.5,
              ),
            )}`,
        );
      }
    }
  } finally {
    await browser.close();
    await server.stop();
    fs.rmSync(dist, { recursive: true, force: true });
  }
}

main().then(
  () => process.exit(0),
  (err) => {
    console.error(err);
    process.exit(1);
  },
);
