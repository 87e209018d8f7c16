/**
 * `npm run bench:reports` — a generated plant of 1,000,000 slabs, 100,000 heats and 150,000 defects
 * (invented, in a temporary database kept between runs), and the timings of the rate-by-variable and
 * screening reports against the bare SQL aggregate that reads the same rows with one GROUP BY
 * (better-sqlite3), measured in the same run: medians of 5 after a warm-up. The reports scan the
 * in-memory slab facts (report-cache.ts); the time to build that cache from SQLite, paid once
 * after a start or a large import, is shown separately. Targets: each report within 1.5× its bare
 * aggregate, and under 1 s. Also prints the query plans.
 *
 * The adjusted model (issue 12): six numeric conditions examined, adjusted for grade family and
 * strand, heat-clustered SEs, on every slab (target under 3 s) and on the last ≈ 100,000 slabs — a
 * plant's twelve months — (target under 0.5 s); the generated plant's own last twelve months hold
 * about half its slabs, so they are held to the million-slab target; each beside the crude
 * rate-by-variable on the same slabs in
 * the same run.
 *
 * The report cache (issue 14): its bytes per slab (narrow exact columns: Float32 only for variables
 * whose values sit on their grid — BENCH_VALUES=grid generates such a plant; by default values carry
 * every digit and stay Float64), the RSS it adds, the background load the server does after listen
 * (and the longest the event loop is held meanwhile), the snapshot written and read back against
 * reading its bytes alone, the screening adjusted for grade family (the default), and a projection to
 * 20 M slabs from these figures. BENCH_SLABS=5000000 builds a five-million-slab plant (≈ 2.3 GB).
 * The server's own start (listen, sign-in, RSS) is `npm run bench -- start` (tests/bench/start.bench.ts). The plant's values repeat (its generator has a short cycle), so slabs share value
 * patterns as heat-level values make them do in a plant; the full model's fit with every slab taken
 * as distinct (grouping switched off) is printed too, as the worst case.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { monitorEventLoopDelay } from "node:perf_hooks";
import v8 from "node:v8";
import vm from "node:vm";
import { openDatabase, type Db } from "../../server/db/client";
import { runMigrations } from "../../server/db/migrate";
import { seedReference } from "../../server/seed/seed";
import { adjustedModel, completeRows, modelTerms } from "../../server/services/reports/adjusted";
import { scan } from "../../server/services/reports/scope";
import { logisticRegressionColumns } from "../../server/stats/logistic-multi";
import { rateByVariable } from "../../server/services/reports/rate-by-variable";
import { buildScope } from "../../server/services/reports/scope";
import { screening } from "../../server/services/reports/screening";
import { slabFacts, slabFactsChanged, startReportCache } from "../../server/services/report-cache";
import { columnKinds, diskBytes, factsBytes } from "../../server/services/report-cache-columns";
import { columnMemoryMb, DEFAULT_COLUMNS_MB } from "../../server/services/report-cache-disk";
import { readSnapshot, writeSnapshot } from "../../server/services/report-cache-snapshot";
import { adjustedQuerySchema, rateByVariableQuerySchema, screeningQuerySchema } from "../../shared/api/reports";
import { VARIABLES } from "../../shared/variables";
import { benchPlantFile } from "./bench-plant";

const SLABS = Number(process.env.BENCH_SLABS ?? 1_000_000);
const HEATS = SLABS / 10;
const DEFECTS = Math.round(SLABS * 0.15);
const RUNS = Number(process.env.BENCH_RUNS ?? 5);
/**
 * BENCH_VALUES=grid: every value stored at the reports' grouping resolution (as instruments and the
 * lab report them), so the cache holds the variables as Float32; by default values carry every digit
 * (means of samples, derived values), the cache's Float64 case.
 */
const GRID = process.env.BENCH_VALUES === "grid";
const file = benchPlantFile(SLABS, GRID);

/** The generated values in insert order, by variable (for BENCH_VALUES=grid). */
const GRID_KEYS = [
  "c_pct",
  "casting_speed_m_min",
  "speed_change_m_min",
  "superheat_c",
  "embr_current_a",
  "sen_depth_mm",
  "argon_nl_min",
  "mold_level_sd_mm",
  "throughput_t_min",
  "shell_exit_mm",
  "embr_field_t",
  "stuart_number",
  "sen_port_velocity_m_s",
  "metallurgical_length_m",
];
const onGrid = (x: number, key: string) => {
  const scale = 10 ** (VARIABLES.find((v) => v.key === key)!.digits + 1);
  return Math.round(x * scale) / scale;
};

function generate(db: Db) {
  const c = db.$client;
  seedReference(db);
  const caster = c.prepare("select id from casters where code = 'CC2'").pluck().get() as number;
  const strands = c.prepare("select id from strands where caster_id = ? order by strand_no").pluck().all(caster) as number[];
  const grades = c.prepare("select g.id, g.family_id from grades g order by g.id").all() as { id: number; family_id: number }[];
  const types = c.prepare("select id, code from defect_types").all() as { id: number; code: string }[];
  const slg = types.find((t) => t.code === "SLG")!.id;
  let seed = 7;
  const rnd = () => (seed = (seed * 1103515245 + 12345) >>> 0) / 2 ** 32;
  // A heat every 10 minutes, the last one cast this morning: the plant's history ends today, as a
  // real plant's does, so the yard's window (the last days) holds a day's casting — not none (a
  // history that ended long ago) nor millions (one running years into the future).
  const today = new Date();
  const t0 = Date.UTC(today.getUTCFullYear(), today.getUTCMonth(), today.getUTCDate()) - (HEATS + 1) * 10 * 60_000;
  c.transaction(() => {
    const insHeat = c.prepare(
      "insert into heats (id, heat_no, caster_id, grade_id, cast_start, cast_end, casting_speed_m_min, sequence_position, c_pct) values (?, ?, ?, ?, ?, ?, ?, ?, ?)",
    );
    const insSlab = c.prepare(
      "insert into slabs (id, slab_id, heat_id, strand_id, piece_no, length_mm, width_mm, thickness_mm, weight_t, cast_at, transition) values (?, ?, ?, ?, ?, 10000, ?, 230, 27, ?, ?)",
    );
    const insCond = c.prepare(`insert into slab_conditions (slab_id, heat_id, caster_id, strand_id, grade_id, family_id, cast_at, transition, sequence_position,
        weight_t, width_mm, thickness_mm, c_pct, casting_speed_m_min, casting_speed_source, speed_change_m_min, superheat_c, superheat_source, embr_current_a,
        embr_current_source, sen_depth_mm, sen_depth_source, argon_nl_min, argon_source, mold_level_sd_mm, mold_level_sd_source, sample_count,
        throughput_t_min, shell_exit_mm, embr_field_t, stuart_number, sen_port_velocity_m_s, metallurgical_length_m, computed_at)
      values (?, ?, ?, ?, ?, ?, ?, ?, ?, 27, ?, 230, ?, ?, 'samples', ?, ?, 'samples', ?, 'samples', ?, 'samples', ?, 'samples', ?, 'samples', 20, ?, ?, ?, ?, ?, ?, 0)`);
    const insDefect = c.prepare(
      "insert into defects (slab_id, type_id, face, position_along_mm, position_across_mm, severity, stage, disposition, found_at, review_status) values (?, ?, 'inner', 1000, 500, ?, 'slab_yard', 'scarf', ?, 'confirmed')",
    );
    let slabId = 0;
    for (let h = 1; h <= HEATS; h++) {
      const g = grades[h % grades.length]!;
      const start = t0 + h * 10 * 60_000;
      const v0 = 1.1 + rnd() * 0.8;
      const embr = Math.floor(rnd() * 5) * 120;
      const sen = 120 + Math.floor(rnd() * 16) * 5;
      insHeat.run(h, `BH${h}`, caster, g.id, start, start + 30 * 60_000, v0, (h % 8) + 1, 0.03 + rnd() * 0.12);
      for (let k = 0; k < 10; k++) {
        slabId++;
        const strand = strands[k % 2]!;
        const v = v0 + (rnd() - 0.5) * 0.05;
        const width = 1200 + Math.floor(rnd() * 8) * 100;
        const transition = k % 5 === 0 && h % 8 !== 1 ? 1 : 0;
        insSlab.run(slabId, `BS${slabId}`, h, strand, Math.floor(k / 2) + 1, width, start + k * 180_000, transition);
        const values = [
          0.03 + rnd() * 0.12,
          v,
          rnd() * 0.3,
          15 + rnd() * 25,
          embr + rnd() * 5,
          sen,
          4 + rnd() * 8,
          1 + rnd() * 4,
          7.8 * v * (width / 1000) * 0.23,
          20 * Math.sqrt(0.8 / v),
          embr * 0.00075,
          0.2 + rnd(),
          0.5 + rnd() * 0.5,
          v * 18.1,
        ];
        if (GRID) GRID_KEYS.forEach((key, j) => (values[j] = onGrid(values[j]!, key)));
        insCond.run(slabId, h, caster, strand, g.id, g.family_id, start + k * 180_000, transition, (h % 8) + 1, width, ...values);
        // Invented defects whose chance rises with speed and falls with the brake current.
        const pSlag = 0.1 * Math.exp(2 * (v - 1.5) - 0.002 * (embr - 240));
        if (rnd() < pSlag) insDefect.run(slabId, slg, 1 + Math.floor(rnd() * 4), start + 86_400_000);
      }
    }
    const have = c.prepare("select count(*) from defects").pluck().get() as number;
    const others = types.filter((t) => t.id !== slg);
    for (let i = have; i < DEFECTS; i++) {
      insDefect.run(1 + Math.floor(rnd() * SLABS), others[i % others.length]!.id, 1 + Math.floor(rnd() * 4), t0 + i * 1000);
    }
  })();
  c.pragma("optimize");
}

function median(xs: number[]) {
  return [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!;
}
function time(fn: () => unknown): number {
  fn(); // warm-up
  const out: number[] = [];
  for (let i = 0; i < RUNS; i++) {
    const t = performance.now();
    fn();
    out.push(performance.now() - t);
  }
  return median(out) / 1000;
}

let cacheFigures: { buildS: number; slicedS: number; readS: number; writeS: number; fileBytes: number; bytes: number; lagMs: number } | null = null;

async function main() {
  const fresh = !fs.existsSync(file);
  const db = openDatabase(file);
  runMigrations(db);
  if (fresh || (db.$client.prepare("select count(*) from slab_conditions").pluck().get() as number) !== SLABS) {
    console.log(`Generating ${SLABS.toLocaleString("en")} slabs, ${HEATS.toLocaleString("en")} heats, ${DEFECTS.toLocaleString("en")} defects into ${file} …`);
    const t = performance.now();
    generate(db);
    console.log(`generated in ${((performance.now() - t) / 1000).toFixed(1)} s`);
  }
  if (process.env.BENCH_GENERATE_ONLY) {
    db.$client.close();
    return;
  }
  const c = db.$client;
  const counts = c.prepare("select (select count(*) from slabs) s, (select count(*) from heats) h, (select count(*) from defects) d").get() as {
    s: number;
    h: number;
    d: number;
  };
  console.log(
    `Plant: ${counts.s.toLocaleString("en")} slabs, ${counts.h.toLocaleString("en")} heats, ${counts.d.toLocaleString("en")} defects · ${RUNS} runs each, medians (Node ${process.version})`,
  );

  const rbvQuery = rateByVariableQuerySchema.parse({ defectType: "SLG", variable: "casting_speed_m_min", bins: "10", binning: "equal" });
  const scope = buildScope(db, rbvQuery);
  const bareRate = c.prepare(
    `with ${scope.aff} select cast((c.casting_speed_m_min - 1) * 10 as int) as bin, count(*), count(a.id)
     from slab_conditions c left join aff a on a.id = c.slab_id where c.casting_speed_m_min is not null group by bin`,
  );
  const sums = VARIABLES.map((v) => `count(c.${v.key}), sum(c.${v.key}), sum(c.${v.key} * c.${v.key})`).join(", ");
  const bareScreen = c.prepare(
    `with ${scope.aff} select (a.id is not null) as aff, count(*), ${sums} from slab_conditions c left join aff a on a.id = c.slab_id group by aff`,
  );

  const gc = (() => {
    v8.setFlagsFromString("--expose-gc");
    return vm.runInNewContext("gc") as () => void;
  })();
  gc();
  const rssBefore = process.memoryUsage().rss;
  slabFactsChanged(db);
  const tb = performance.now();
  const facts = slabFacts(db);
  const buildS = (performance.now() - tb) / 1000;
  const bytes = factsBytes(facts);
  gc();
  const rssCache = process.memoryUsage().rss - rssBefore;
  const kinds = columnKinds(facts);
  console.log(
    `slab facts cache: built from SQLite in ${buildS.toFixed(2)} s (once after a start or a large import), ${(bytes / 1024 / 1024).toFixed(0)} MB in typed arrays`,
  );
  console.log(
    `  ${(bytes / facts.slabId.length).toFixed(0)} bytes per slab (${facts.slabId.length.toLocaleString("en")} rows of room, ${(facts.slabId.length - facts.size).toLocaleString("en")} of them spare; was 243); RSS grew ${(rssCache / 1048576).toFixed(0)} MB; ${kinds.float32.length} of ${VARIABLES.length} variables held as Float32 (on their grid)${kinds.float32.length ? `: ${kinds.float32.join(", ")}` : ""}`,
  );
  console.log(
    `  condition columns in files beyond REPORT_COLUMNS_MB (${columnMemoryMb() ?? `unset: all or none in ${DEFAULT_COLUMNS_MB}`} MB): ${kinds.onDisk.length} of ${VARIABLES.length} (${(diskBytes(facts) / 1048576).toFixed(0)} MB, read when a report needs them)`,
  );

  // The server's way: after listen, in slices, the event loop free in between.
  {
    const lag = monitorEventLoopDelay({ resolution: 5 });
    lag.enable();
    const t = performance.now();
    const handle = startReportCache(db, { snapshotFile: null });
    await handle.whenReady();
    const slicedS = (performance.now() - t) / 1000;
    lag.disable();
    await handle.close();
    // The snapshot: written at shutdown, read back (and checked against the database) at the next start.
    const snap = path.join(os.tmpdir(), `strandsight-bench-snapshot-${process.pid}`);
    try {
      const tw = performance.now();
      const { bytes: fileBytes } = await writeSnapshot(db.$client, slabFacts(db), snap);
      const writeS = (performance.now() - tw) / 1000;
      const tf = performance.now();
      fs.readFileSync(snap);
      const floorS = (performance.now() - tf) / 1000;
      const tr = performance.now();
      const back = await readSnapshot(db.$client, snap, { capacityFor: (n) => n + 65_536 });
      const readS = (performance.now() - tr) / 1000;
      if (!back.facts) throw new Error(`the snapshot was not read back: ${back.reason}`);
      console.log(
        `  in the background (the server, after listen): ${slicedS.toFixed(2)} s, the event loop held at most ${(lag.max / 1e6).toFixed(0)} ms at a time (p99 ${(lag.percentile(99) / 1e6).toFixed(0)} ms)`,
      );
      console.log(
        `  snapshot: ${(fileBytes / 1048576).toFixed(0)} MB written in ${writeS.toFixed(2)} s; read back and checked against the database in ${readS.toFixed(2)} s (the file's bytes alone ${floorS.toFixed(2)} s: ${(readS / floorS).toFixed(1)}×) — ${(buildS / readS).toFixed(1)}× faster than the rebuild`,
      );
      cacheFigures = { buildS, slicedS, readS, writeS, fileBytes, bytes, lagMs: lag.max / 1e6 };
    } finally {
      fs.rmSync(snap, { force: true });
    }
  }

  const results = [
    { name: "rate-by-variable (SLG × casting speed)", report: time(() => rateByVariable(db, rbvQuery)), bare: time(() => bareRate.raw().all(scope.params)) },
    {
      name: "screening crude (SLG, adjustFor=none)",
      report: time(() => screening(db, screeningQuerySchema.parse({ defectType: "SLG", adjustFor: "none" }))),
      bare: time(() => bareScreen.raw().all(scope.params)),
    },
  ];
  console.log("");
  console.log("report                                             report     bare SQL   ratio    target         under 1 s");
  for (const r of results) {
    const ratio = r.report / r.bare;
    console.log(
      `${r.name.padEnd(50)} ${r.report.toFixed(3).padStart(6)} s  ${r.bare.toFixed(3).padStart(6)} s   ${ratio.toFixed(2)}×   ≤ 1.50× ${ratio <= 1.5 ? "met    " : "NOT met"}  ${r.report < 1 ? "yes" : "NO"}`,
    );
  }

  // The adjusted model against the crude rate-by-variable on the same slabs.
  const day = (ms: number) => new Date(ms).toISOString().slice(0, 10);
  const lastCast = c.prepare("select max(cast_at) from slab_conditions").pluck().get() as number;
  const hundredThousandth = c.prepare("select cast_at from slab_conditions order by cast_at desc limit 1 offset 99999").pluck().get() as number;
  const conditions = "casting_speed_m_min,superheat_c,embr_current_a,sen_depth_mm,argon_nl_min,mold_level_sd_mm";
  const scopes = [
    { name: "every slab", filters: {}, target: 3 },
    { name: "last 12 months", filters: { from: day(lastCast - 365 * 86_400_000 + 86_400_000) }, target: 3 },
    { name: "last ≈100,000 slabs", filters: { from: day(hundredThousandth) }, target: 0.5 },
  ];
  console.log("");
  console.log(
    `adjusted model: SLG, ${conditions.split(",").length} numeric conditions + grade family + strand, heat-clustered SEs; beside it the crude rate-by-variable (casting speed) on the same slabs`,
  );
  console.log("scope                      slabs        adjusted   crude rbv  ratio    target");
  for (const sc of scopes) {
    const aq = adjustedQuerySchema.parse({ defectType: "SLG", variables: conditions, adjustFor: "grade_family,strand", ...sc.filters });
    const rq = rateByVariableQuerySchema.parse({ defectType: "SLG", variable: "casting_speed_m_min", ...sc.filters });
    const slabs = adjustedModel(db, aq).slabs;
    const a = time(() => adjustedModel(db, aq));
    const r = time(() => rateByVariable(db, rq));
    console.log(
      `adjusted model ${sc.name.padEnd(20)} ${slabs.toLocaleString("en").padStart(9)}  ${a.toFixed(3).padStart(7)} s  ${r.toFixed(3).padStart(7)} s  ${(a / r).toFixed(2).padStart(5)}×  < ${sc.target} s ${a < sc.target ? "met" : "NOT met"}`,
    );
  }
  {
    const sc = scan(db, buildScope(db, adjustedQuerySchema.parse({ defectType: "SLG", variables: conditions })));
    const terms = modelTerms(db, sc, [...conditions.split(","), "grade_family", "strand"]);
    const { rows } = completeRows(sc, terms);
    const distinct = time(() =>
      logisticRegressionColumns(
        { terms: terms.map((t) => t.column), affected: sc.affected, cluster: sc.facts.heatId, rows },
        { se: "cluster", likelihoodRatio: false, group: false },
      ),
    );
    console.log(`worst case: the full model's fit alone with every slab as its own row (grouping off), every slab: ${distinct.toFixed(3)} s`);
  }
  const sq = screeningQuerySchema.parse({ defectType: "SLG" });
  const sAdj = time(() => screening(db, sq));
  console.log(`screening adjusted for grade family (the default), 22 variables + 4 categorical, every slab: ${sAdj.toFixed(3)} s`);
  const sCrude = results[1]!.report;
  gc();
  const rss = process.memoryUsage().rss / 1048576;
  const peak = process.resourceUsage().maxRSS / 1024;
  console.log(`memory of this process: RSS ${rss.toFixed(0)} MB after the reports, peak ${peak.toFixed(0)} MB (the server's own RSS: npm run bench -- start)`);
  {
    // Projection to 20 M slabs, linear in the slabs from this run's figures.
    const k = 20_000_000 / facts.size;
    const c = cacheFigures!;
    console.log(
      `projection to 20,000,000 slabs (× ${k.toFixed(1)} of these figures): cache ${((c.bytes * k) / 1048576).toFixed(0)} MB, snapshot file ${((c.fileBytes * k) / 1048576).toFixed(0)} MB, reports ready after a start in ≈ ${(c.readS * k).toFixed(0)} s from the snapshot (≈ ${(c.slicedS * k).toFixed(0)} s rebuilt), screening crude ≈ ${(sCrude * k).toFixed(1)} s, adjusted ≈ ${(sAdj * k).toFixed(1)} s`,
    );
  }
  const fit = adjustedModel(db, adjustedQuerySchema.parse({ defectType: "SLG", variables: conditions, adjustFor: "grade_family,strand" }));
  console.log(
    `  every slab: ${fit.slabs.toLocaleString("en")} slabs in ${fit.heats.toLocaleString("en")} heats, ${fit.model.iterations} Newton passes; casting speed adjusted odds ratio ${fit.terms[0]!.perWords} ${fit.terms[0]!.adjusted.oddsRatio?.toFixed(4)}, crude ${fit.terms[0]!.crude.oddsRatio?.toFixed(4)}`,
  );

  const sample = rateByVariable(db, rbvQuery);
  console.log(
    `\nrate-by-variable on ${sample.slabs.toLocaleString("en")} slabs, ${sample.affected.toLocaleString("en")} affected: Spearman ρ ${sample.spearman.rho?.toFixed(4)}, odds ratio per m/min ${sample.logistic.oddsRatio?.toFixed(3)}`,
  );
  console.log("\nQuery plan of the bare aggregate (EXPLAIN QUERY PLAN):");
  const plan = c
    .prepare(
      `explain query plan with ${scope.aff} select round(c.casting_speed_m_min, 3) as v, count(*), count(a.id) from slab_conditions c left join aff a on a.id = c.slab_id where c.casting_speed_m_min is not null group by v`,
    )
    .all(scope.params) as { detail: string }[];
  for (const p of plan) console.log(`  ${p.detail}`);
  const dated = c.prepare(`explain query plan select count(*) from slab_conditions c where c.cast_at >= ? and c.cast_at <= ?`).all(0, 1) as {
    detail: string;
  }[];
  console.log("The affected slabs (the part of each report that stays in SQL):");
  for (const p of c
    .prepare(`explain query plan select d.slab_id from defects d where ${scope.defectWhere.join(" and ")} group by d.slab_id`)
    .all(scope.params) as { detail: string }[])
    console.log(`  ${p.detail}`);
  console.log("With a date range:");
  for (const p of dated) console.log(`  ${p.detail}`);
  db.$client.close();
}

main().catch((err) => {
  console.error(err);
  process.exit(1);
});
