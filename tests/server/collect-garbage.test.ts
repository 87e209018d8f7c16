/**
 * server/lib/collect-garbage.ts: a full collection gives a let-go array's memory back at once, and
 * the report thread asks for one only after a report on a large plant whose facts are in.
 */
import { describe, expect, it } from "vitest";
import { COLLECT_AFTER_MS, COLLECT_FROM_SLABS, collectGarbage, collectsAfterReport } from "../../server/lib/collect-garbage";

describe("a garbage collection after a report", () => {
  it("when an array of 64 MB is let go, then a collection gives its memory back", () => {
    collectGarbage();
    const before = process.memoryUsage().arrayBuffers;
    let big: Float64Array | null = new Float64Array(8 * 1048576).fill(1);
    // The array's 64 MB (give or take what the test runner lets go meanwhile).
    expect(process.memoryUsage().arrayBuffers - before).toBeGreaterThan(56 * 1048576);
    expect(big[8 * 1048576 - 1]).toBe(1);
    big = null;
    collectGarbage();
    expect(process.memoryUsage().arrayBuffers - before).toBeLessThan(8 * 1048576);
  });

  it("when the plant is large and its facts are in, then a report of 0.1 s or more is followed by one; not while warming up, not on a small plant, not after a quick report", () => {
    expect(COLLECT_FROM_SLABS).toBe(1_000_000);
    expect(COLLECT_AFTER_MS).toBe(100);
    expect(collectsAfterReport({ state: "ready", slabs: 5_000_000 }, 2_500)).toBe(true);
    expect(collectsAfterReport({ state: "ready", slabs: 1_000_000 }, 100)).toBe(true);
    // Facts being patched after writes: the reports still run on them.
    expect(collectsAfterReport({ state: "stale", slabs: 5_000_000 }, 400)).toBe(true);
    expect(collectsAfterReport({ state: "warming", slabs: 5_000_000 }, 400)).toBe(false);
    expect(collectsAfterReport({ state: "warming", slabs: null }, 400)).toBe(false);
    expect(collectsAfterReport({ state: "ready", slabs: 999_999 }, 2_500)).toBe(false);
    expect(collectsAfterReport({ state: "ready", slabs: 5_000_000 }, 99)).toBe(false);
    expect(collectsAfterReport(null, 2_500)).toBe(false);
  });
});
