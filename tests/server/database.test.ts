import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { createAuth } from "../../server/auth";
import { openDatabase } from "../../server/db/client";
import { runMigrations } from "../../server/db/migrate";
import { seedDemo } from "../../server/seed/seed";

const dir = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-db-"));
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

const TABLES = [
  "user",
  "session",
  "account",
  "verification",
  "plant_settings",
  "casters",
  "strands",
  "grade_families",
  "grades",
  "sequences",
  "heats",
  "slabs",
  "process_samples",
  "defect_categories",
  "defect_types",
  "defects",
  "defect_photos",
  "cause_groups",
  "cause_tags",
  "defect_causes",
  "investigations",
  "investigation_subjects",
  "investigation_hypotheses",
  "investigation_actions",
  "products",
  "claims",
  "claim_slabs",
  "attachments",
  "saved_reports",
  "audit_log",
  "email_outbox",
  "mail_received",
  "api_tokens",
];

describe("database", () => {
  it("when the migrations run on an empty file, then every table exists with WAL, foreign keys and a busy timeout", () => {
    const db = openDatabase(path.join(dir, "empty.db"));
    runMigrations(db);
    runMigrations(db); // a second run is a no-op
    const tables = db.$client.prepare("select name from sqlite_master where type = 'table'").pluck().all() as string[];
    for (const t of TABLES) expect(tables, t).toContain(t);
    expect(db.$client.pragma("journal_mode", { simple: true })).toBe("wal");
    expect(db.$client.pragma("foreign_keys", { simple: true })).toBe(1);
    expect(db.$client.pragma("busy_timeout", { simple: true })).toBe(5000);
    expect(db.$client.pragma("integrity_check", { simple: true })).toBe("ok");
    // 64 MB of page cache (negative: KiB) unless the connection asks for less, as the report thread does.
    expect(db.$client.pragma("cache_size", { simple: true })).toBe(-65536);
    db.$client.close();
    const small = openDatabase(path.join(dir, "empty.db"), { cacheMb: 8 });
    expect(small.$client.pragma("cache_size", { simple: true })).toBe(-8192);
    small.$client.close();
  });

  it("when the keys are inspected, then heat_no and slab_id are unique and indexed, and a defect needs a slab", () => {
    const db = openDatabase(path.join(dir, "keys.db"));
    runMigrations(db);
    const uniqueCols = (table: string) =>
      (db.$client.prepare(`select name, "unique" as u from pragma_index_list('${table}')`).all() as { name: string; u: number }[])
        .filter((i) => i.u === 1)
        .flatMap((i) => db.$client.prepare(`select name from pragma_index_info('${i.name}')`).pluck().all());
    expect(uniqueCols("heats")).toContain("heat_no");
    expect(uniqueCols("slabs")).toContain("slab_id");
    const fks = db.$client.prepare('select "from", "table" from pragma_foreign_key_list(\'defects\')').all();
    expect(fks).toContainEqual({ from: "slab_id", table: "slabs" });
    const slabCol = db.$client.prepare("select \"notnull\" from pragma_table_info('defects') where name = 'slab_id'").pluck().get();
    expect(slabCol).toBe(1);
    // Foreign keys are enforced: a defect on a slab that does not exist is refused.
    expect(() =>
      db.$client
        .prepare("insert into defects (slab_id, type_id, face, severity, stage, disposition, found_at) values (999, 999, 'inner', 1, 'slab_yard', 'accept', 0)")
        .run(),
    ).toThrow(/FOREIGN KEY/);
    db.$client.close();
  });

  it("when the seed runs twice, then the second run duplicates nothing", async () => {
    const db = openDatabase(path.join(dir, "seed.db"));
    runMigrations(db);
    const auth = createAuth({ db, secret: "x".repeat(40), baseURL: "http://localhost:3000" });
    const first = await seedDemo(db, auth, { password: "seed-twice-pw", scale: 0.02 });
    const snapshot = () => Object.fromEntries(TABLES.map((t) => [t, db.$client.prepare(`select count(*) from "${t}"`).pluck().get() as number]));
    const afterFirst = snapshot();
    const second = await seedDemo(db, auth, { password: "seed-twice-pw", scale: 0.02 });
    expect(first.usersCreated).toBe(5);
    expect(first.production?.heats).toBeGreaterThan(20);
    expect(second.usersCreated).toBe(0);
    expect(second.production).toBeNull();
    expect(snapshot()).toEqual(afterFirst);
    db.$client.close();
  });
});
