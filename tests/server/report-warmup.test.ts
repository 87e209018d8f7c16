/**
 * The report cache after a start (issue 14): loaded in the background while every other request is
 * answered, reports "warming up" (503, Retry-After, in words) until then; read back from the snapshot
 * written at the last stop when that is whole and current, rebuilt when it is out of date or damaged;
 * narrow exact columns (Float32 only where a variable's values sit on its grid) that grow by a step.
 *
 * A restart of the server is played on the same database by starting the cache again (what
 * server/index.ts does after it listens). To hold the load at its first read, deterministically, the
 * snapshot's path is a named pipe (mkfifo): opening it for reading waits until the test opens it for
 * writing — no timing, no switch in the code.
 */
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { VARIABLES } from "@shared/variables";
import { openDatabase, type Db } from "../../server/db/client";
import { createResolver } from "../../server/services/conditions.service";
import { exactValue, slabFacts, slabFactsChanged, startReportCache, VARIABLE_SCALE, type ReportCacheHandle } from "../../server/services/report-cache";
import { allocate, ensureCapacity, GROW_MIN_ROWS, put, SELECT_COLUMNS, type FactRow } from "../../server/services/report-cache-columns";
import { createTestApp, type TestApp } from "../helpers/test-app";

let t: TestApp;
let quality: Awaited<ReturnType<TestApp["agentFor"]>>;
let file: string;
const handles: ReportCacheHandle[] = [];

beforeAll(async () => {
  t = await createTestApp({ scale: 0.05 });
  quality = await t.agentFor("quality");
  file = path.join(t.dir, "app.db.report-cache");
});
afterAll(async () => {
  for (const h of handles) await h.close();
  await t?.close();
});

/** Starts the cache as a starting server does (from the snapshot file, else the database). */
function start(opts: { snapshotEveryMs?: number } = {}) {
  const h = startReportCache(t.db, { snapshotFile: file, ...opts });
  handles.push(h);
  return h;
}
/** Starts, waits until ready, stops (writing the snapshot): a server's run. */
async function run(between?: () => Promise<void>) {
  const h = start();
  await h.whenReady();
  await between?.();
  await h.close();
  return h;
}

const SCREENING = "/api/reports/screening?adjustFor=none";
const RATE = "/api/reports/rate-by-variable?variable=casting_speed_m_min&bins=5";
async function reportsNow() {
  const a = await quality.get(SCREENING);
  const b = await quality.get(RATE);
  expect([a.status, b.status]).toEqual([200, 200]);
  return JSON.stringify([a.body, b.body]);
}
/** The reports from a cache built straight from the database (no background, no snapshot). */
async function reportsFromDatabase() {
  slabFactsChanged(t.db);
  return reportsNow();
}

/** Every slab's values in the cache against SQLite's, exactly (Object.is, so −0 and NaN count). */
function expectCacheEqualsDatabase(db: Db) {
  const f = slabFacts(db);
  const rows = db.$client.prepare(`select ${SELECT_COLUMNS} from slab_conditions order by slab_id`).raw().all() as FactRow[];
  expect(f.size).toBe(rows.length);
  let compared = 0;
  for (const r of rows) {
    const i = f.indexOf[r[0]!]!;
    expect(i).toBeGreaterThanOrEqual(0);
    VARIABLES.forEach((v, k) => {
      const stored = r[10 + k] ?? NaN;
      const cached = exactValue(f.vars[v.key]!, VARIABLE_SCALE[v.key]!, i);
      if (!Object.is(cached, stored)) expect.fail(`${v.key} of slab ${r[0]}: cache ${cached}, database ${stored}`);
      compared++;
    });
    expect([f.castAt[i], f.familyId[i], f.gradeId[i], f.heatId[i], f.weightT[i]]).toEqual([r[1] ?? NaN, r[5] ?? 0, r[4] ?? 0, r[9] ?? 0, r[8] ?? NaN]);
  }
  return compared;
}

describe("reports while the slab data load after a start", () => {
  it("when the report data are still loading, then reports answer 503 with Retry-After and the warming-up words while sign-in, the yard and other reads answer; once loaded, the reports answer 200", async () => {
    fs.rmSync(file, { force: true });
    execFileSync("mkfifo", [file]);
    const h = start();
    let released = false;
    const release = async (bytes: string) => {
      if (released) return;
      released = true;
      const w = await fs.promises.open(file, "w");
      await w.write(bytes);
      await w.close();
    };
    try {
      expect(h.status().state).toBe("warming");
      const res = await quality.get(RATE);
      expect(res.status).toBe(503);
      expect(res.body.error.code).toBe("reports_warming_up");
      expect(res.body.error.message).toMatch(/^Reports are warming up: the slab data are being loaded \(about \d+ s\)\. Try again in a moment\.$/);
      const retry = Number(res.headers["retry-after"]);
      expect(retry).toBeGreaterThanOrEqual(2);
      expect(retry).toBeLessThanOrEqual(10);
      expect(res.body.error.details).toMatchObject({ retryAfterSeconds: retry, phase: "opening" });
      expect(res.body.error.details.secondsLeft).toBeGreaterThanOrEqual(1);
      // Every report that reads the slab data, and its workbook, waits the same way.
      for (const p of ["/api/reports/overview", "/api/reports/screening", "/api/reports/control-chart", "/api/reports/screening.xlsx"]) {
        expect((await quality.get(p)).status, p).toBe(503);
      }
      // Meanwhile: a new sign-in, the yard tablet's set, the plant, a report that reads SQLite only.
      const inspector = await t.agentFor("inspector");
      expect((await inspector.get("/api/yard/sync")).status).toBe(200);
      expect((await inspector.get("/api/me")).status).toBe(200);
      expect((await quality.get("/api/reports/slab-positions")).status).toBe(200);
      expect(h.status().state).toBe("warming");
      await release("this is not a snapshot\n");
      await h.whenReady();
      expect(h.status()).toMatchObject({ state: "ready", from: "database", snapshotIgnored: "the file is not a report cache snapshot" });
      const rate = await quality.get(RATE);
      expect(rate.status).toBe(200);
      expect(rate.body.slabs).toBeGreaterThan(0);
    } finally {
      await release("");
      await h.close();
    }
    // The pipe was replaced by a real snapshot at close.
    expect(fs.statSync(file).isFile()).toBe(true);
  });

  it("when the server stops and starts again with nothing changed, then the cache is read from the snapshot (not rebuilt) and the reports equal those from the database", async () => {
    fs.rmSync(file, { force: true });
    const first = await run();
    expect(first.status()).toMatchObject({ from: "database", snapshotIgnored: "no snapshot" });
    expect(fs.statSync(file).size).toBeGreaterThan(0);
    const again = await run(async () => {
      expect(expectCacheEqualsDatabase(t.db)).toBeGreaterThan(0);
    });
    expect(again.status()).toMatchObject({ from: "snapshot", snapshotIgnored: null, slabs: slabFacts(t.db).size });
    const h = start();
    await h.whenReady();
    const fromSnapshot = await reportsNow();
    await h.close();
    expect(fromSnapshot).toBe(await reportsFromDatabase());
  });

  it("when a slab's conditions were written after the snapshot by another connection (a crash after the last snapshot), then the snapshot is refused as out of date and the cache rebuilt with the new value", async () => {
    await run();
    const other = openDatabase(t.db.$client.name);
    const slab = other.$client.prepare("select id, casting_speed_m_min as v from slabs order by id limit 1").get() as { id: number; v: number | null };
    other.$client.prepare("update slabs set casting_speed_m_min = 2.345 where id = ?").run(slab.id);
    createResolver(other).resolve([slab.id]);
    other.$client.close();
    const h = await run(async () => {
      const f = slabFacts(t.db);
      expect(exactValue(f.vars.casting_speed_m_min!, 1000, f.indexOf[slab.id]!)).toBe(2.345);
      expectCacheEqualsDatabase(t.db);
    });
    expect(h.status()).toMatchObject({ from: "database", snapshotIgnored: "the snapshot is out of date: slab conditions were written after the snapshot" });
  });

  it("when a grade moved to another family after the snapshot, slabs were added, or the database is another one, then the snapshot is refused as out of date", async () => {
    await run();
    const other = openDatabase(t.db.$client.name);
    const g = other.$client.prepare("select id, family_id as f from grades where id in (select grade_id from slab_conditions) order by id limit 1").get() as {
      id: number;
      f: number;
    };
    const otherFamily = other.$client.prepare("select id from grade_families where id <> ? order by id limit 1").pluck().get(g.f) as number;
    other.$client.transaction(() => {
      other.$client.prepare("update grades set family_id = ? where id = ?").run(otherFamily, g.id);
      other.$client.prepare("update slab_conditions set family_id = ? where grade_id = ?").run(otherFamily, g.id);
    })();
    other.$client.close();
    const moved = await run(async () => {
      expectCacheEqualsDatabase(t.db);
    });
    expect(moved.status().snapshotIgnored).toBe("the snapshot is out of date: grade families changed after the snapshot");

    const db2 = openDatabase(t.db.$client.name);
    const heat = db2.$client
      .prepare("select heat_id as h, strand_id as s, max(piece_no) as p from slabs group by heat_id, strand_id order by heat_id limit 1")
      .get() as { h: number; s: number; p: number };
    const id = Number(
      db2.$client
        .prepare(
          "insert into slabs (slab_id, heat_id, strand_id, piece_no, length_mm, width_mm, thickness_mm, weight_t) values ('WARM-NEW-1', ?, ?, ?, 9000, 1500, 230, 24.2)",
        )
        .run(heat.h, heat.s, heat.p + 1).lastInsertRowid,
    );
    createResolver(db2).resolve([id]);
    db2.$client.close();
    const added = await run(async () => {
      expect(slabFacts(t.db).indexOf[id]).toBeGreaterThanOrEqual(0);
    });
    expect(added.status().snapshotIgnored).toMatch(new RegExp(`^the snapshot is out of date: the highest slab id is ${id}, the snapshot's \\d+$`));

    // Another database file (a copy of another plant, a different server's) put in its place.
    await run();
    t.db.$client.prepare("update report_cache_state set database_id = 'another-database'").run();
    const other2 = await run();
    expect(other2.status().snapshotIgnored).toBe("the snapshot is out of date: it was taken from another database");
  });

  it("when the snapshot is damaged (a changed byte, cut short, a leftover temporary file), then it is ignored, the cache rebuilt, and the reports equal those from the database", async () => {
    const expected = await reportsFromDatabase();
    const damage: [string, () => void, string][] = [
      [
        "a changed byte in the columns",
        () => {
          const fd = fs.openSync(file, "r+");
          const at = Math.floor(fs.statSync(file).size / 2);
          const b = Buffer.alloc(1);
          fs.readSync(fd, b, 0, 1, at);
          b[0] = b[0]! ^ 0x5a;
          fs.writeSync(fd, b, 0, 1, at);
          fs.closeSync(fd);
        },
        "the snapshot is damaged (its checksum does not match)",
      ],
      ["cut short", () => fs.truncateSync(file, fs.statSync(file).size - 1000), "the snapshot is cut short"],
      [
        "a header that is not JSON",
        () => {
          const fd = fs.openSync(file, "r+");
          fs.writeSync(fd, Buffer.from("{{{{"), 0, 4, 20);
          fs.closeSync(fd);
        },
        "the snapshot's header is damaged",
      ],
    ];
    for (const [what, spoil, reason] of damage) {
      await run();
      spoil();
      const h = start();
      await h.whenReady();
      expect(h.status(), what).toMatchObject({ state: "ready", from: "database", snapshotIgnored: reason });
      expect(await reportsNow(), what).toBe(expected);
      await h.close();
    }
    // A temporary file a crash left while writing goes at the next start; the snapshot beside it is used.
    const leftover = path.join(t.dir, ".app.db.report-cache.99999.tmp");
    fs.writeFileSync(leftover, "half a snapshot");
    const h = start();
    await h.whenReady();
    expect(fs.existsSync(leftover)).toBe(false);
    expect(h.status().from).toBe("snapshot");
    await h.close();
  });

  it("when slab conditions change while the server runs, then a snapshot is written within the period (to a temporary file renamed over the old one) and the next start reads the change from it", async () => {
    await run();
    const h = start({ snapshotEveryMs: 100 });
    await h.whenReady();
    const before = fs.statSync(file).mtimeMs;
    const slab = t.db.$client.prepare("select id from slabs order by id desc limit 1").pluck().get() as number;
    t.db.$client.prepare("update slabs set casting_speed_m_min = 1.234 where id = ?").run(slab);
    createResolver(t.db).resolve([slab]);
    const deadline = Date.now() + 30_000;
    while (fs.statSync(file).mtimeMs === before && Date.now() < deadline) await new Promise((r) => setTimeout(r, 50));
    expect(fs.statSync(file).mtimeMs).toBeGreaterThan(before);
    expect(fs.readdirSync(t.dir).filter((n) => n.endsWith(".tmp"))).toEqual([]);
    await h.close();
    const again = await run(async () => {
      const f = slabFacts(t.db);
      expect(exactValue(f.vars.casting_speed_m_min!, 1000, f.indexOf[slab]!)).toBe(1.234);
    });
    expect(again.status().from).toBe("snapshot");
  });
});

describe("lean columns, exact values", () => {
  /** Values on each variable's grid across a wide range (both ends included), written straight into slab_conditions. */
  function writeOnGrid(db: Db, n: number) {
    const c = db.$client;
    const ids = c.prepare("select slab_id from slab_conditions order by slab_id limit ?").pluck().all(n) as number[];
    const ranges: Record<string, [number, number]> = {
      casting_speed_m_min: [0, 12],
      speed_change_m_min: [0, 2],
      superheat_c: [-20, 90],
      embr_current_a: [0, 2000],
      sen_depth_mm: [0, 400],
      argon_nl_min: [0, 40],
      mold_level_sd_mm: [0, 60],
      throughput_t_min: [0, 20],
      shell_exit_mm: [0, 50],
      embr_field_t: [0, 1],
      stuart_number: [0, 100],
      sen_port_velocity_m_s: [0, 5],
      metallurgical_length_m: [0, 60],
      width_mm: [500, 3500],
      c_pct: [0, 2],
      mn_pct: [0, 3],
      si_pct: [0, 3],
      s_pct: [0, 0.1],
      al_pct: [0, 0.3],
      nb_pct: [0, 0.2],
      ti_pct: [0, 0.2],
      n_ppm: [0, 600],
    };
    let seed = 11;
    const rnd = () => (seed = (seed * 1103515245 + 12345) >>> 0) / 2 ** 32;
    const upd = c.prepare(`update slab_conditions set ${VARIABLES.map((v) => `${v.key} = ?`).join(", ")} where slab_id = ?`);
    c.transaction(() => {
      ids.forEach((id, j) => {
        const values = VARIABLES.map((v) => {
          const scale = VARIABLE_SCALE[v.key]!;
          const [lo, hi] = ranges[v.key]!;
          const k = j === 0 ? Math.round(lo * scale) : j === 1 ? Math.round(hi * scale) : Math.round((lo + rnd() * (hi - lo)) * scale);
          return k / scale;
        });
        upd.run(...values, id);
      });
    })();
    slabFactsChanged(db, ids);
    return ids;
  }

  it("when every value sits on its variable's grid, then each variable is held as Float32 and every slab's value reads back exactly as SQLite holds it, grouped or not", () => {
    writeOnGrid(t.db, 5_000);
    slabFactsChanged(t.db);
    const f = slabFacts(t.db);
    for (const v of VARIABLES) expect(f.vars[v.key], v.key).toBeInstanceOf(Float32Array);
    expect(expectCacheEqualsDatabase(t.db)).toBe(f.size * VARIABLES.length);
    // The reports group at ten times the display resolution: Float32's value groups to the same number.
    const rows = t.db.$client.prepare(`select ${SELECT_COLUMNS} from slab_conditions`).raw().all() as FactRow[];
    for (const r of rows) {
      const i = f.indexOf[r[0]!]!;
      VARIABLES.forEach((v, k) => {
        const stored = r[10 + k];
        if (stored == null) return;
        const s = VARIABLE_SCALE[v.key]!;
        if (Math.round(f.vars[v.key]![i]! * s) / s !== Math.round(stored * s) / s) expect.fail(`${v.key} ${stored} groups differently`);
      });
    }
  });

  it("when one value has more digits than the grid, or more than Float32 carries, then only that variable turns Float64 and every value stays exact", () => {
    const [a, b] = writeOnGrid(t.db, 2_000);
    slabFactsChanged(t.db);
    slabFacts(t.db);
    t.db.$client.prepare("update slab_conditions set casting_speed_m_min = 1.23456789, width_mm = 123456789.1 where slab_id = ?").run(a);
    t.db.$client.prepare("update slab_conditions set superheat_c = ? where slab_id = ?").run(0.1 + 0.2, b);
    slabFactsChanged(t.db, [a!, b!]);
    const f = slabFacts(t.db);
    expect(f.vars.casting_speed_m_min).toBeInstanceOf(Float64Array);
    expect(f.vars.width_mm).toBeInstanceOf(Float64Array);
    expect(f.vars.superheat_c).toBeInstanceOf(Float64Array);
    expect(f.vars.c_pct).toBeInstanceOf(Float32Array);
    expect(exactValue(f.vars.casting_speed_m_min!, 1000, f.indexOf[a!]!)).toBe(1.23456789);
    expect(exactValue(f.vars.superheat_c!, 100, f.indexOf[b!]!)).toBe(0.30000000000000004);
    expectCacheEqualsDatabase(t.db);
  });

  it("when slabs are added past the spare room, then the columns grow by a step (an eighth, at least 65,536 rows) one at a time, not by doubling, and every value stays", () => {
    const f = allocate(1_000_000, 10);
    for (let i = 0; i < 1_000_000; i += 997) f.vars.superheat_c![i] = 25.5;
    f.size = 1_000_000;
    ensureCapacity(f, 1_000_001);
    expect(f.slabId.length).toBe(1_125_000);
    expect(f.vars.casting_speed_m_min!.length).toBe(1_125_000);
    expect(f.vars.superheat_c![997 * 500]).toBe(25.5);
    const small = allocate(100, 10);
    small.size = 100;
    ensureCapacity(small, 101);
    expect(small.slabId.length).toBe(100 + GROW_MIN_ROWS);

    // Through the database: appended slabs (read again as changes) beyond the room a build leaves.
    const c = t.db.$client;
    slabFactsChanged(t.db);
    const built = slabFacts(t.db);
    const room = built.slabId.length;
    const heat = c.prepare("select heat_id as h, strand_id as s from slabs limit 1").get() as { h: number; s: number };
    const template = c.prepare(`select ${SELECT_COLUMNS} from slab_conditions limit 1`).raw().get() as FactRow;
    const insSlab = c.prepare(
      "insert into slabs (slab_id, heat_id, strand_id, piece_no, length_mm, width_mm, thickness_mm, weight_t) values (?, ?, ?, ?, 9000, 1500, 230, 24.2)",
    );
    const cols = SELECT_COLUMNS.split(", ");
    const insCond = c.prepare(`insert into slab_conditions (${cols.join(", ")}) values (${cols.map(() => "?").join(", ")})`);
    const added = room - built.size + 10;
    for (let done = 0; done < added; done += 40_000) {
      const ids: number[] = [];
      c.transaction(() => {
        for (let j = done; j < Math.min(added, done + 40_000); j++) {
          const id = Number(insSlab.run(`GROW-${j}`, heat.h, heat.s, 1000 + j).lastInsertRowid);
          insCond.run(
            id,
            ...template.slice(1, 10),
            ...template.slice(10).map((x, k) => (k === 0 && x != null ? Math.round((x as number) * 1000 + (j % 7)) / 1000 : x)),
          );
          ids.push(id);
        }
      })();
      slabFactsChanged(t.db, ids);
      slabFacts(t.db);
    }
    const grown = slabFacts(t.db);
    expect(grown.slabId.length).toBe(room + Math.max(GROW_MIN_ROWS, Math.floor(room / 8)));
    expectCacheEqualsDatabase(t.db);
  });

  it("when a row is put into the narrow columns, then ids widen from 8 to 16 to 32 bits as they grow and the weight stays Float32 only while it is exact", () => {
    const f = allocate(4, 100_000);
    const row = (id: number, grade: number, weight: number): FactRow => [id, 0, 1, 2, grade, 3, 0, 4, weight, 5, ...VARIABLES.map(() => null)];
    put(f, 0, row(1, 200, 27));
    expect(f.gradeId).toBeInstanceOf(Uint8Array);
    expect(f.weightT).toBeInstanceOf(Float32Array);
    put(f, 1, row(2, 40_000, 26.5));
    expect(f.gradeId).toBeInstanceOf(Uint16Array);
    put(f, 2, row(3, 70_000, 26.91));
    expect(f.gradeId).toBeInstanceOf(Int32Array);
    expect(f.weightT).toBeInstanceOf(Float64Array);
    expect([...f.gradeId.subarray(0, 3)]).toEqual([200, 40_000, 70_000]);
    expect([...f.weightT.subarray(0, 3)]).toEqual([27, 26.5, 26.91]);
  });
});
