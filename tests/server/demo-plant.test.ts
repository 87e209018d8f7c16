import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import crypto from "node:crypto";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createAuth } from "../../server/auth";
import { openDatabase, type Db } from "../../server/db/client";
import { runMigrations } from "../../server/db/migrate";
import { seedDemo, type SeedResult } from "../../server/seed/seed";

// The full demo plant, once: its size, its speed, and the directions its defect model must show.
const dir = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-demo-"));
let db: Db;
let result: SeedResult;

function fresh(name: string) {
  const d = openDatabase(path.join(dir, name));
  runMigrations(d);
  return { d, auth: createAuth({ db: d, secret: "y".repeat(40), baseURL: "http://localhost:3000" }) };
}

beforeAll(async () => {
  const { d, auth } = fresh("full.db");
  db = d;
  result = await seedDemo(db, auth, { password: "demo-plant-pw" });
}, 60_000);
afterAll(() => {
  db?.$client.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

/** Share of slabs with at least one defect of the given types, within a slab subset. */
function rate(codes: string[], where: string): { n: number; affected: number; p: number } {
  const row = db.$client
    .prepare(
      `select count(*) as n, sum(exists(select 1 from defects d join defect_types t on t.id = d.type_id
         where d.slab_id = s.id and t.code in (${codes.map(() => "?").join(",")}))) as affected
       from slabs s join heats h on h.id = s.heat_id join grades g on g.id = h.grade_id
       join grade_families f on f.id = g.family_id where ${where}`,
    )
    .get(...codes) as { n: number; affected: number };
  return { ...row, p: row.affected / row.n };
}

describe("the invented demo plant", () => {
  it("when seeded, then it has about 2,000 heats in about 250 sequences, 16,000 slabs and 2,500 defects, in under 20 s", () => {
    const c = result.production!;
    expect(c.sequences).toBe(250);
    expect(c.heats).toBeGreaterThan(1800);
    expect(c.heats).toBeLessThan(2200);
    expect(c.slabs).toBeGreaterThan(14_500);
    expect(c.slabs).toBeLessThan(17_500);
    expect(c.defects).toBeGreaterThan(2000);
    expect(c.defects).toBeLessThan(3000);
    expect(result.seconds).toBeLessThan(20);
    const span = db.$client.prepare("select min(cast_at), max(cast_at) from slabs").raw().get() as [number, number];
    expect((span[1] - span[0]) / 86_400_000).toBeGreaterThan(230); // about eight months
  });

  it("when slag entrapment is compared, then it rises with casting speed and falls with brake current and SEN depth", () => {
    const slow = rate(["SLG"], "h.casting_speed_m_min < 1.4");
    const fast = rate(["SLG"], "h.casting_speed_m_min >= 1.6");
    expect(fast.p).toBeGreaterThan(slow.p * 1.5);
    const brakeOff = rate(["SLG"], "h.embr_current_a = 0");
    const brakeHigh = rate(["SLG"], "h.embr_current_a >= 400");
    expect(brakeOff.p).toBeGreaterThan(brakeHigh.p * 2);
    const shallow = rate(["SLG"], "h.sen_depth_mm < 145");
    const deep = rate(["SLG"], "h.sen_depth_mm >= 175");
    expect(shallow.p).toBeGreaterThan(deep.p);
  });

  it("when longitudinal facial cracks are compared, then they cluster in peritectic grades and rise with mold level fluctuation", () => {
    const per = rate(["LFC"], "f.code = 'PER'");
    const other = rate(["LFC"], "f.code <> 'PER'");
    expect(per.p).toBeGreaterThan(other.p * 4);
    const calm = rate(["LFC"], "f.code = 'PER' and h.mold_level_sd_mm < 2.5");
    const rough = rate(["LFC"], "f.code = 'PER' and h.mold_level_sd_mm >= 3.5");
    expect(rough.p).toBeGreaterThan(calm.p);
  });

  it("when inclusion defects are compared, then transition slabs carry more of them", () => {
    const inclusion = ["ALC", "SLV", "BLI", "LAM", "SEM"];
    const transition = rate(inclusion, "s.transition = 1");
    const steady = rate(inclusion, "s.transition = 0");
    expect(transition.n).toBeGreaterThan(1000);
    expect(transition.p).toBeGreaterThan(steady.p * 2);
  });

  it("when seeded, then every slab has its report row, in step with its slab, heat and grade", () => {
    const mismatches = db.$client
      .prepare(
        `select count(*) from slabs s join heats h on h.id = s.heat_id join grades g on g.id = h.grade_id
         left join slab_conditions c on c.slab_id = s.id
         where c.slab_id is null or c.cast_at is not s.cast_at or c.heat_id <> s.heat_id or c.strand_id <> s.strand_id
            or c.grade_id <> h.grade_id or c.family_id <> g.family_id or c.transition <> s.transition or c.width_mm <> s.width_mm
            or c.sequence_position is not h.sequence_position or c.c_pct is not h.c_pct or c.casting_speed_source <> 'samples'`,
      )
      .pluck()
      .get();
    expect(mismatches).toBe(0);
  });

  it("when seeded twice into empty databases, then the data are identical (deterministic)", async () => {
    const digest = async (name: string) => {
      const { d, auth } = fresh(name);
      // The last shifts end when the demo is seeded: both seeds are given the same moment.
      await seedDemo(d, auth, { password: "demo-plant-pw", scale: 0.03, now: Date.UTC(2026, 11, 2, 9, 41) });
      const h = crypto.createHash("sha256");
      for (const row of d.$client.prepare("select slab_id, heat_id, length_mm, cast_at, transition, disposition from slabs order by id").raw().iterate())
        h.update(JSON.stringify(row));
      for (const row of d.$client.prepare("select slab_id, type_id, face, position_along_mm, severity, stage from defects order by id").raw().iterate())
        h.update(JSON.stringify(row));
      d.$client.close();
      return h.digest("hex");
    };
    expect(await digest("a.db")).toBe(await digest("b.db"));
  });
});
