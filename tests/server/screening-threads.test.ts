/**
 * Issue 14, screening on more than one core (server/services/reports/screening-threads.ts): helper
 * threads take some of a screening's tests from a shared counter and read the slab facts on shared
 * memory. The answer must be the one a single thread gives, to the last digit, whoever worked which
 * test, in every language, and a helper that dies costs nothing but time.
 *
 * On a real SQLite file: the demo plant (2 %) and the confounded plant of 4,000 heats × 8 slabs
 * (tests/helpers/confounded-plant.ts), 32,000-odd slabs, shared out from one slab on.
 */
import fs from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { screeningQuerySchema } from "@shared/api/reports";
import { openDatabase } from "../../server/db/client";
import { speakingIn } from "../../server/lib/words";
import { slabFacts } from "../../server/services/report-cache";
import { screening } from "../../server/services/reports/screening";
import {
  configureScreeningThreads,
  lastScreeningShare,
  screeningHelperThreads,
  screeningThreadSettings,
  startScreeningHelpers,
  stopScreeningHelpers,
} from "../../server/services/reports/screening-threads";
import { buildConfoundedPlant } from "../helpers/confounded-plant";
import { createTestApp, type TestApp } from "../helpers/test-app";

let t: TestApp;
const defaults = screeningThreadSettings();

beforeAll(async () => {
  t = await createTestApp({ beforeStart: (db) => buildConfoundedPlant(db, { heats: 4000 }) });
}, 120_000);
afterAll(async () => {
  configureScreeningThreads(defaults);
  await stopScreeningHelpers();
  await t?.close();
});

const QUERIES: [string, Record<string, string>][] = [
  ["crude", { defectType: "SLG", adjustFor: "none" }],
  ["adjusted for the grade family (the default)", { defectType: "SLG" }],
  ["model-based SEs", { defectType: "SLG", se: "model" }],
  ["adjusted for a condition and the strand", { defectType: "SLG", adjustFor: "mold_level_sd_mm,strand" }],
  // After the wider ones: the reused scope and grid (scan's and gridOf's scratch slots) as the helper reads them.
  ["a narrower scope, adjusted for the grade family", { defectType: "SLG", from: "2027-06-01" }],
];

const run = (query: Record<string, string>, language: "en" | "de" = "en") =>
  JSON.stringify(speakingIn(language, () => screening(t.db, screeningQuerySchema.parse(query))));

/** The screening in one thread. */
function alone(query: Record<string, string>, language: "en" | "de" = "en") {
  configureScreeningThreads({ threads: 0 });
  const out = run(query, language);
  expect(lastScreeningShare()).toMatchObject({ threads: 1, byHelpers: 0, failedOver: 0 });
  return out;
}

/**
 * The screening shared out with one helper, until the helper has worked at least one test (a helper
 * woken while the caller has already taken every test works none): every answer is compared.
 */
function shared(query: Record<string, string>, expected: string, language: "en" | "de" = "en") {
  configureScreeningThreads({ threads: 1, sharedFrom: 1 });
  let scopeWork = 0;
  let byHelpers = 0;
  for (let attempt = 0; attempt < 20; attempt++) {
    expect(run(query, language)).toBe(expected);
    const share = lastScreeningShare();
    expect(share.threads).toBe(2);
    expect(share.failedOver).toBe(0);
    // Over every attempt: what the helpers made themselves instead of taking the caller's.
    scopeWork += share.scopeWorkByHelpers;
    byHelpers += share.byHelpers;
    if (share.byHelpers > 0) return { ...share, scopeWorkByHelpers: scopeWork, byHelpers };
  }
  throw new Error("the helper worked no test in 20 screenings");
}

describe("a screening shared out over helper threads", () => {
  it("when a screening is shared with a helper, then every query gives the same answer as one thread, character for character, on the caller's numbering of the heats and grids", async () => {
    configureScreeningThreads({ threads: 1, sharedFrom: 1 });
    await startScreeningHelpers(1);
    for (const [, query] of QUERIES) {
      const expected = alone(query);
      const body = JSON.parse(expected) as { slabs: number; variables: { testable: boolean }[] };
      // The plant is the one meant: 32,000-odd slabs (13,000-odd from June) and tests that can be made.
      expect(body.slabs).toBeGreaterThan(query.from ? 13_000 : 32_000);
      if (query.from) expect(body.slabs).toBeLessThan(16_000);
      expect(body.variables.filter((v) => v.testable).length).toBeGreaterThan(5);
      const share = shared(query, expected);
      expect(share.byHelpers).toBeGreaterThan(0);
      // The helper took the caller's numbering of the heats (cluster-robust SEs) and grids of the
      // categorical adjustment terms instead of making its own.
      expect(share.scopeWorkByHelpers).toBe(0);
    }
  }, 120_000);

  it("when the screening is asked for in German, then the rows the helper worked speak German too", async () => {
    const query = { defectType: "SLG" };
    const german = alone(query, "de");
    expect(german).not.toBe(alone(query, "en"));
    // A German method sentence (the catalogue's own words) in the rows.
    expect(german).toContain("Welch");
    shared(query, german, "de");
  }, 60_000);

  it("when a helper thread has died between screenings, then the next screening is still the same and a new helper takes part", async () => {
    const query = { defectType: "SLG" };
    const expected = alone(query);
    configureScreeningThreads({ threads: 1, sharedFrom: 1 });
    await startScreeningHelpers(1);
    const [before] = screeningHelperThreads();
    expect(before).toBeDefined();
    await before!.terminate();
    // The pool finds it gone and starts another.
    await startScreeningHelpers(1);
    shared(query, expected);
    const [after] = screeningHelperThreads();
    expect(after).toBeDefined();
    expect(after).not.toBe(before);
  }, 60_000);

  it("when the scope is smaller than the sharing threshold, sharing is off, or a column of the facts is not on shared memory, then the screening stays in one thread", () => {
    const query = { defectType: "SLG", adjustFor: "none" };
    const expected = alone(query);
    configureScreeningThreads({ threads: 1, sharedFrom: 1_000_000 });
    expect(run(query)).toBe(expected);
    expect(lastScreeningShare().threads).toBe(1);
    configureScreeningThreads({ threads: 0, sharedFrom: 1 });
    expect(run(query)).toBe(expected);
    expect(lastScreeningShare().threads).toBe(1);
    // A column of the facts not on shared memory (it would be copied to every helper): one thread.
    const facts = slabFacts(t.db);
    const shared = facts.heatId;
    facts.heatId = Int32Array.from(shared);
    try {
      configureScreeningThreads({ threads: 1, sharedFrom: 1 });
      expect(run(query)).toBe(expected);
      expect(lastScreeningShare().threads).toBe(1);
    } finally {
      facts.heatId = shared;
    }
  });

  it("when a helper cannot work its test (here: the database file is no longer where the caller opened it), then the caller works it and the answer is the same", async () => {
    // A copy of the plant under a name of its own, opened by the caller and then moved: the caller's
    // connection keeps reading it, a helper that opens the name finds nothing there.
    t.db.$client.pragma("wal_checkpoint(TRUNCATE)");
    const file = path.join(t.dir, "moved.db");
    fs.copyFileSync(t.env.DATABASE_FILE, file);
    const db = openDatabase(file);
    try {
      const query = { defectType: "SLG", adjustFor: "none" };
      configureScreeningThreads({ threads: 0 });
      const expected = JSON.stringify(screening(db, screeningQuerySchema.parse(query)));
      fs.renameSync(file, path.join(t.dir, "moved-away.db"));
      configureScreeningThreads({ threads: 1, sharedFrom: 1 });
      let failedOver = 0;
      for (let attempt = 0; attempt < 20 && failedOver === 0; attempt++) {
        await startScreeningHelpers(1);
        expect(JSON.stringify(screening(db, screeningQuerySchema.parse(query)))).toBe(expected);
        const share = lastScreeningShare();
        failedOver = share.failedOver;
        if (failedOver > 0) {
          // One test failed in the helper, which then took no more: the caller worked it again.
          expect(failedOver).toBe(1);
          expect(share.byHelpers).toBe(0);
          expect(share.failures.join(" ")).toMatch(/unable to open|does not exist|no such file/i);
        }
      }
      expect(failedOver).toBe(1);
    } finally {
      db.$client.close();
    }
  }, 90_000);
});
