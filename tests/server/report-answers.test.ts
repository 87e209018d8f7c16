/**
 * Issue 14: the report thread's answers kept (server/services/report-answers.ts) — which questions
 * are the same, and that an answer never outlives the data state it was worked out on. The thread
 * giving them again through the real app is tested in report-thread.test.ts.
 */
import { describe, expect, it } from "vitest";
import { answerKey, ReportAnswers } from "../../server/services/report-answers";

describe("the answers kept (unit)", () => {
  it("when the data state moves on, then every answer kept is dropped; past the limit the least recently used goes", () => {
    const a = new ReportAnswers(2);
    a.put("x", "s1", { n: 1 });
    a.put("y", "s1", { n: 2 });
    expect(a.get("x", "s1")).toEqual({ n: 1 });
    // x used last: z pushes y out.
    a.put("z", "s1", { n: 3 });
    expect(a.size).toBe(2);
    expect(a.get("y", "s1")).toBeUndefined();
    expect(a.get("x", "s1")).toEqual({ n: 1 });
    expect(a.get("z", "s1")).toEqual({ n: 3 });
    // Another state: nothing kept answers, and nothing of the old state comes back with it.
    expect(a.get("x", "s2")).toBeUndefined();
    expect(a.size).toBe(0);
    expect(a.get("x", "s1")).toBeUndefined();
    // An answer worked out on a newer state replaces what was kept.
    a.put("x", "s1", { n: 1 });
    a.put("w", "s3", { n: 4 });
    expect(a.size).toBe(1);
    expect(a.get("w", "s3")).toEqual({ n: 4 });
  });

  it("when two questions differ in their report, query, defaulted lists or language, then their keys differ; the order of the defaulted lists does not matter", () => {
    const base = { kind: "screening", query: { defectType: "SLG", adjustFor: ["grade_family"] }, defaulted: ["adjustFor", "variables"], language: "en" };
    const k = answerKey(base);
    expect(answerKey({ ...base, defaulted: ["variables", "adjustFor"] })).toBe(k);
    expect(answerKey({ ...base, kind: "adjusted" })).not.toBe(k);
    expect(answerKey({ ...base, query: { defectType: "LFC", adjustFor: ["grade_family"] } })).not.toBe(k);
    expect(answerKey({ ...base, defaulted: ["variables"] })).not.toBe(k);
    expect(answerKey({ ...base, language: "de" })).not.toBe(k);
  });
});
