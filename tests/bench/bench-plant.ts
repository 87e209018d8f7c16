/**
 * The generated plant of bench:reports (tests/bench/reports.bench.ts), as the benchmarks that start the
 * real server use it: made once in the temp folder, copied per run with the migrations and the demo
 * users added.
 */
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { createAuth } from "../../server/auth";
import { openDatabase } from "../../server/db/client";
import { runMigrations } from "../../server/db/migrate";
import { seedDemo } from "../../server/seed/seed";

export const REPO = path.resolve(import.meta.dirname, "../..");
export const BENCH_PASSWORD = "bench-password-1";

/** The plant's file for this many slabs (grid: values at the reports' resolution). */
/** v3: the history ends on the day of generation (v2 ran from 2024 on, past today at 5 M slabs). Delete the file to generate it again. */
export const benchPlantFile = (slabs: number, grid = false) => path.join(os.tmpdir(), `strandsight-bench-reports-v3-${slabs}${grid ? "-grid" : ""}.db`);

/** A copy of the plant in a new temp folder (`app.db`), migrated, with the demo users; generated first when missing. */
export async function copyBenchPlant(source: string, prefix: string): Promise<string> {
  if (!fs.existsSync(source)) {
    console.log(`Generating the bench:reports plant first (${source}) …`);
    const r = spawnSync(process.execPath, ["--import", "tsx", path.join(REPO, "tests/bench/reports.bench.ts")], {
      stdio: "inherit",
      env: { ...process.env, BENCH_GENERATE_ONLY: "1" },
    });
    if (r.status !== 0) throw new Error("generating the plant failed");
  }
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), prefix));
  fs.copyFileSync(source, path.join(dir, "app.db"));
  const db = openDatabase(path.join(dir, "app.db"));
  runMigrations(db);
  const auth = createAuth({ db, secret: "bench-secret-0123456789-0123456789-abcdef", baseURL: "http://localhost:3000" });
  await seedDemo(db, auth, { password: BENCH_PASSWORD, production: false });
  db.$client.close();
  return dir;
}

// The tests' port helper: a port nobody listens on and no other run has reserved.
export { freePort } from "../helpers/ports";
