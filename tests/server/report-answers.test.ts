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

  it("when an answer is larger than one may be, then it is not kept; past the size of them all, the least recently used go", () => {
    // Sizes as JSON: {"s":"xxxx"} is 12 characters with a 4-character string.
    const answer = (n: number) => ({ s: "x".repeat(n) });
    const a = new ReportAnswers(16, 30, 60);
    a.put("big", "s", answer(30));
    expect(a.get("big", "s")).toBeUndefined();
    expect(a.size).toBe(0);
    a.put("p", "s", answer(12)); // 20
    a.put("q", "s", answer(12)); // 40
    expect(a.totalSize).toBe(40);
    expect(a.get("p", "s")).toEqual(answer(12));
    a.put("r", "s", answer(17)); // 65 > 60: q (least recently used) goes
    expect(a.totalSize).toBe(45);
    expect(a.get("q", "s")).toBeUndefined();
    expect(a.get("p", "s")).toEqual(answer(12));
    expect(a.get("r", "s")).toEqual(answer(17));
    // The same key again replaces, and its old size is let go.
    a.put("r", "s", answer(2));
    expect(a.totalSize).toBe(30);
    // An answer too large under a key already kept: the old one goes too (it is no longer the answer).
    a.put("r", "s", answer(30));
    expect(a.get("r", "s")).toBeUndefined();
    expect(a.totalSize).toBe(20);
    // A new state: nothing kept, nothing counted.
    expect(a.get("p", "t")).toBeUndefined();
    expect(a.totalSize).toBe(0);
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
