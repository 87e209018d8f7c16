/**
 * Issue 14, screening on more than one core (server/services/reports/screening-threads.ts): helper
 * threads take some of a screening's tests from a shared counter and read the slab facts on shared
 * memory. The answer must be the one a single thread gives, to the last digit, whoever worked which
 * test, in every language, and a helper that dies costs nothing but time.
 *
 * On a real SQLite file: the demo plant (2 %) and the confounded plant of 4,000 heats × 8 slabs
 * (tests/helpers/confounded-plant.ts), 32,000-odd slabs, shared out from one slab on.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { screeningQuerySchema } from "@shared/api/reports";
import { speakingIn } from "../../server/lib/words";
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
];

const run = (query: Record<string, string>, language: "en" | "de" = "en") =>
  JSON.stringify(speakingIn(language, () => screening(t.db, screeningQuerySchema.parse(query))));

/** The screening in one thread. */
function alone(query: Record<string, string>, language: "en" | "de" = "en") {
  configureScreeningThreads({ threads: 0 });
  const out = run(query, language);
  expect(lastScreeningShare()).toEqual({ threads: 1, byHelpers: 0, failedOver: 0 });
  return out;
}

/**
 * The screening shared out with one helper, until the helper has worked at least one test (a helper
 * woken while the caller has already taken every test works none): every answer is compared.
 */
function shared(query: Record<string, string>, expected: string, language: "en" | "de" = "en") {
  configureScreeningThreads({ threads: 1, sharedFrom: 1 });
  for (let attempt = 0; attempt < 20; attempt++) {
    expect(run(query, language)).toBe(expected);
    const share = lastScreeningShare();
    expect(share.threads).toBe(2);
    expect(share.failedOver).toBe(0);
    if (share.byHelpers > 0) return share;
  }
  throw new Error("the helper worked no test in 20 screenings");
}

describe("a screening shared out over helper threads", () => {
  it("when a screening is shared with a helper, then every query gives the same answer as one thread, character for character", async () => {
    configureScreeningThreads({ threads: 1, sharedFrom: 1 });
    await startScreeningHelpers(1);
    for (const [, query] of QUERIES) {
      const expected = alone(query);
      const body = JSON.parse(expected) as { slabs: number; variables: { testable: boolean }[] };
      // The plant is the one meant: 32,000-odd slabs and tests that can be made.
      expect(body.slabs).toBeGreaterThan(32_000);
      expect(body.variables.filter((v) => v.testable).length).toBeGreaterThan(5);
      const share = shared(query, expected);
      expect(share.byHelpers).toBeGreaterThan(0);
      expect(share.byHelpers).toBeLessThan(body.variables.length + 1);
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
    shared(query, expected);
    const [after] = screeningHelperThreads();
    expect(after).toBeDefined();
    expect(after).not.toBe(before);
  }, 60_000);

  it("when the scope is smaller than the sharing threshold, or sharing is off, then the screening stays in one thread", () => {
    const query = { defectType: "SLG", adjustFor: "none" };
    const expected = alone(query);
    configureScreeningThreads({ threads: 1, sharedFrom: 1_000_000 });
    expect(run(query)).toBe(expected);
    expect(lastScreeningShare().threads).toBe(1);
    configureScreeningThreads({ threads: 0, sharedFrom: 1 });
    expect(run(query)).toBe(expected);
    expect(lastScreeningShare().threads).toBe(1);
  });
});
