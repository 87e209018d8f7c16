/**
 * The import threads under stress, through the real pool and the real worker (piscina): a full
 * queue, a thread that runs out of memory with others waiting behind it, a wait that runs too
 * long, and a check that runs too long. The limits are lowered so the cases come quickly.
 */
import fs from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { IMPORT_LIMITS } from "@shared/api/imports";
import { createImportPool, type ImportPool } from "../../server/import/import-pool";
import { createTestApp, type TestApp } from "../helpers/test-app";

let t: TestApp;
const pools: ImportPool[] = [];
beforeAll(async () => {
  t = await createTestApp({ scale: 0.01 });
});
afterAll(async () => {
  for (const p of pools) await p.close();
  await t?.close();
});
/** A pool whose thread has started (a cold start takes a second or so, which would count as waiting). */
async function pool(opts: Parameters<typeof createImportPool>[0]) {
  const p = createImportPool(opts);
  pools.push(p);
  await p.warm();
  return p;
}

/** A CSV of `n` valid heats in the test's folder. */
function heatsCsv(name: string, n: number): string {
  const lines = ["heat_no,caster,grade,cast_start,casting_speed_m_min"];
  for (let i = 0; i < n; i++)
    lines.push(`${name.toUpperCase()}${String(i).padStart(7, "0")},CC2,LV-ST32,${new Date(Date.UTC(2027, 5, 1) + i * 60_000).toISOString()},1.4`);
  const file = path.join(t.dir, `${name}.csv`);
  fs.writeFileSync(file, lines.join("\n"));
  return file;
}
const job = (file: string) => ({ kind: "heats" as const, dryRun: true, source: "upload" as const, file, fileName: path.basename(file), by: { actor: "test" } });
const outcome = (p: Promise<unknown>) =>
  p.then(
    (r) => ({ ok: true as const, rows: (r as { rows: number }).rows }),
    (e) => ({
      ok: false as const,
      status: e.status as number,
      code: e.code as string,
      message: e.message as string,
      retry: e.details?.retryAfterSeconds as number | undefined,
    }),
  );

describe("the import pool", () => {
  it("when one thread and one waiting place are taken, then a third import is turned away at once with 429 and Retry-After", async () => {
    const p = await pool({ maxThreads: 1, maxQueue: 1 });
    const big = heatsCsv("queuefull", 60_000);
    const small = heatsCsv("queuesmall", 3);
    const results = await Promise.all([outcome(p.run(t.db, job(big))), outcome(p.run(t.db, job(small))), outcome(p.run(t.db, job(small)))]);
    expect(results[0]).toEqual({ ok: true, rows: 60_000 });
    expect(results[1]).toEqual({ ok: true, rows: 3 });
    expect(results[2]).toMatchObject({ ok: false, status: 429, code: "imports_busy", retry: 60 });
  });

  it("when a thread runs out of memory, then that import gets 413 and the imports waiting behind it still run", async () => {
    const p = await pool({ maxThreads: 1, maxQueue: 2, heapMb: 160 });
    const hungry = heatsCsv("hungry", 150_000);
    const small = heatsCsv("afteroom", 3);
    const results = await Promise.all([outcome(p.run(t.db, job(hungry))), outcome(p.run(t.db, job(small))), outcome(p.run(t.db, job(small)))]);
    expect(results[0]).toMatchObject({
      ok: false,
      status: 413,
      code: "import_too_large",
      message: "The file needs more memory to check than one import may use (160 MB); nothing was imported. Split it into smaller files.",
    });
    expect(results[1]).toEqual({ ok: true, rows: 3 });
    expect(results[2]).toEqual({ ok: true, rows: 3 });
  }, 120_000);

  it("when an import waits for a thread longer than the pool allows, then it is answered busy (429), not 'too large'", async () => {
    const p = await pool({ maxThreads: 1, maxQueue: 2, queueWaitMs: 300 });
    const big = heatsCsv("slowfirst", 60_000);
    const small = heatsCsv("waiter", 3);
    const results = await Promise.all([outcome(p.run(t.db, job(big))), outcome(p.run(t.db, job(small)))]);
    expect(results[0]).toEqual({ ok: true, rows: 60_000 });
    expect(results[1]).toMatchObject({ ok: false, status: 429, code: "imports_busy" });
  });

  it("when checking a file takes longer than its limit, then it is stopped with 413 in words", async () => {
    const p = await pool({ limits: { ...IMPORT_LIMITS, checkSeconds: 0 } });
    const r = await outcome(p.run(t.db, job(heatsCsv("overtime", 40_000))));
    expect(r).toMatchObject({
      ok: false,
      status: 413,
      message: "Checking the file took longer than 0 seconds and was stopped; nothing was imported. Split it into smaller files.",
    });
  });
});
