/**
 * `npm run bench` — every benchmark of the project, one after the other, then one table of each
 * figure beside its target, so that a regression shows:
 *   - bench:reports  report timings on the generated 1M-slab plant, as ratios to the bare SQL aggregate
 *   - bench:import   the import rate, and the import against exceljs's read
 *   - bench:photos   the photo pipeline against sharp alone
 *   - bench:history  the heat history workbook (12 slabs, 40 defects, 80 photos)
 *   - load           the latency of posting a defect while 32 clients post and 4 read reports
 *   - bundles        the JavaScript each screen loads, after gzip (from the Vite manifest)
 * Each benchmark measures its own baseline in the same run. Nothing here asserts time.
 * `npm run bench -- load bundles` runs only the parts named.
 */
import { execFileSync, spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import zlib from "node:zlib";
import { describeLoad, runLoad } from "../tests/helpers/load";
import { startTestServer, TEST_PASSWORD } from "../tests/helpers/test-app";

type Figure = { figure: string; value: string; target: string; met: boolean | null };
const figures: Figure[] = [];
const only = process.argv.slice(2);
const wanted = (name: string) => only.length === 0 || only.includes(name);

function run(script: string): string {
  console.log(`\n━━ npm run ${script} ━━`);
  const r = spawnSync("npm", ["run", "--silent", script], { encoding: "utf8", stdio: ["ignore", "pipe", "inherit"], env: process.env, maxBuffer: 64 * 1024 * 1024 });
  process.stdout.write(r.stdout ?? "");
  if (r.status !== 0) {
    figures.push({ figure: script, value: `failed (exit ${r.status})`, target: "runs", met: false });
    return "";
  }
  return r.stdout;
}

function reports() {
  const out = run("bench:reports");
  for (const m of out.matchAll(/^(\S[^\n]*?)\s+([\d.]+) s\s+([\d.]+) s\s+([\d.]+)×\s+≤ 1\.50×\s+(met|NOT met)\s+(yes|NO)/gm)) {
    const name = m[1]!.trim();
    figures.push({ figure: `report ${name}: time / bare SQL`, value: `${m[4]}× (${m[2]} s vs ${m[3]} s)`, target: "≤ 1.50×", met: m[5] === "met" });
    figures.push({ figure: `report ${name}: time`, value: `${m[2]} s`, target: "< 1 s", met: m[6] === "yes" });
  }
  // The adjusted model (issue 12), beside the crude rate-by-variable on the same slabs.
  for (const m of out.matchAll(/^adjusted model (.+?)\s+([\d,]+)\s+([\d.]+) s\s+([\d.]+) s\s+([\d.]+)×\s+< ([\d.]+) s (met|NOT met)/gm)) {
    figures.push({ figure: `adjusted model, ${m[1]!.trim()} (${m[2]} slabs)`, value: `${m[3]} s (crude rate-by-variable ${m[4]} s, ${m[5]}×)`, target: `< ${m[6]} s`, met: m[7] === "met" });
  }
}

function imports() {
  const out = run("bench:import");
  const m = /^all\s+(\d+)\s+([\d.]+) s\s+([\d.]+) s\s+([\d.]+) s\s+([\d,]+)\s+([\d.]+)× (met|NOT met)\s+([\d.]+)× (met|NOT met)/m.exec(out);
  if (!m) return void figures.push({ figure: "import", value: "no summary line", target: "", met: false });
  figures.push({ figure: "import rate", value: `${m[5]} rows/s (${m[1]} rows in ${m[4]} s)`, target: "(recorded)", met: null });
  figures.push({ figure: "import / exceljs whole-workbook read", value: `${m[6]}×`, target: "≤ 1.50×", met: m[7] === "met" });
  figures.push({ figure: "import / exceljs streaming read", value: `${m[8]}×`, target: "≤ 1.50×", met: m[9] === "met" });
}

function photos() {
  const out = run("bench:photos");
  const m = /^ratio\s+([\d.]+)×\s+target ≤ ([\d.]+)×\s+(met|NOT met)/m.exec(out);
  if (m) figures.push({ figure: "photo pipeline / sharp alone (12 MP JPEG)", value: `${m[1]}×`, target: `≤ ${m[2]}×`, met: m[3] === "met" });
}

function history() {
  const out = run("bench:history");
  const t = /^Strandsight history workbook\s+([\d.]+) s/m.exec(out);
  const r = /^ratio\s+([\d.]+)×/m.exec(out);
  if (t) figures.push({ figure: "heat history workbook (12 slabs, 40 defects, 80 photos)", value: `${t[1]} s (${r?.[1]}× exceljs alone)`, target: "< 2 s", met: Number(t[1]) < 2 });
}

async function load() {
  const seconds = Number(process.env.BENCH_LOAD_SECONDS ?? 15);
  console.log(`\n━━ load: 32 clients post defects and 4 read reports for ${seconds} s ━━`);
  const server = await startTestServer({ scale: 0.02 });
  try {
    const d = describeLoad(await runLoad({ baseUrl: server.baseUrl, db: server.db, password: TEST_PASSWORD, writers: 32, readers: 4, seconds }));
    console.log(`${d.posts} posts (${d.postsPerSecond.toFixed(0)}/s), ${d.rows} rows for ${d.created201} answers 201; p50 ${d.postP50.toFixed(0)} ms, p95 ${d.postP95.toFixed(0)} ms; report reads p95 ${d.readP95.toFixed(0)} ms`);
    figures.push({ figure: "post a defect under load: p95 latency", value: `${d.postP95.toFixed(0)} ms (p50 ${d.postP50.toFixed(0)} ms, ${d.postsPerSecond.toFixed(0)} posts/s)`, target: "(recorded)", met: null });
    figures.push({ figure: "lost writes / 5xx under load", value: `${d.created201 - d.rows} / ${d.fiveHundreds}`, target: "0 / 0", met: d.created201 === d.rows && d.fiveHundreds === 0 });
  } finally {
    await server.stop();
  }
}

/** JS of a route = the entry chunk with its static imports, plus the route chunk with its static imports. */
function bundles() {
  console.log("\n━━ bundles: vite build ━━");
  execFileSync("npx", ["vite", "build", "--logLevel", "warn"], { stdio: "inherit" });
  const manifest = JSON.parse(fs.readFileSync("dist/.vite/manifest.json", "utf8")) as Record<string, { file: string; imports?: string[]; isEntry?: boolean }>;
  const gz = new Map<string, number>();
  const size = (file: string) => {
    if (!gz.has(file)) gz.set(file, zlib.gzipSync(fs.readFileSync(path.join("dist", file)), { level: 9 }).length);
    return gz.get(file)!;
  };
  const closure = (key: string, seen = new Set<string>()) => {
    if (seen.has(key)) return seen;
    seen.add(key);
    for (const i of manifest[key]?.imports ?? []) closure(i, seen);
    return seen;
  };
  const entry = Object.keys(manifest).find((k) => manifest[k]!.isEntry)!;
  const entryFiles = new Set([...closure(entry)].map((k) => manifest[k]!.file));
  const entryKb = [...entryFiles].reduce((s, f) => s + size(f), 0) / 1024;
  figures.push({ figure: "bundle: entry (every screen)", value: `${entryKb.toFixed(1)} kB`, target: "(recorded)", met: null });
  const rows: [string, number][] = [];
  for (const r of Object.keys(manifest).filter((k) => k.startsWith("src/app/routes/")).sort()) {
    const files = new Set([...entryFiles, ...[...closure(r)].map((k) => manifest[k]!.file)]);
    rows.push([r.replace("src/app/routes/", "").replace(/\.tsx$/, ""), [...files].reduce((s, f) => s + size(f), 0) / 1024]);
  }
  console.log("route                         JS after gzip (entry + route; chart code loads on its own when drawn)");
  for (const [r, kb] of rows) console.log(`${r.padEnd(30)}${kb.toFixed(1).padStart(7)} kB`);
  const yard = rows.filter(([r]) => r === "yard" || r === "yard-slab").reduce((m, [, kb]) => Math.max(m, kb), 0);
  figures.push({ figure: "bundle: inspector's logging screen (yard-slab)", value: `${yard.toFixed(1)} kB`, target: "≤ 200 kB", met: yard <= 200 });
  const heaviest = rows.reduce((a, b) => (b[1] > a[1] ? b : a));
  figures.push({ figure: `bundle: heaviest route (${heaviest[0]})`, value: `${heaviest[1].toFixed(1)} kB`, target: "(recorded)", met: null });
}

async function main() {
  if (wanted("reports")) reports();
  if (wanted("import")) imports();
  if (wanted("photos")) photos();
  if (wanted("history")) history();
  if (wanted("load")) await load();
  if (wanted("bundles")) bundles();
  console.log("\n━━ Strandsight benchmarks ━━");
  const w = Math.max(...figures.map((f) => f.figure.length));
  for (const f of figures) console.log(`${f.figure.padEnd(w)}  ${f.value.padEnd(44)}  ${f.target.padEnd(12)} ${f.met === null ? "" : f.met ? "met" : "NOT MET"}`);
  process.exit(0);
}

main().catch((err) => {
  console.error(err);
  process.exit(1);
});
