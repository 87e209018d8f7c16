/**
 * The report thread's last answers, given again while nothing they read has changed.
 *
 * On a large plant a screening takes seconds of arithmetic (three at five million slabs), and the
 * same question is often asked again with nothing changed in between: the workbook of the report
 * just seen (the .xlsx route runs the same report for the same query), a screen opened again, a
 * second engineer looking at the same default view. Those are answered from here.
 *
 * An answer is given again only while
 * - SQLite's `data_version` on the report thread's connection is what it was when the answer was
 *   worked out: it changes whenever another connection commits (the main thread's writes, an
 *   import's, another process's; sqlite.org/pragma.html#pragma_data_version), and the report
 *   thread's connection never writes; and
 * - the slab facts have taken no change since (report-cache.ts, dataState);
 * for the same report, the same query (as parsed, every default filled in), the same defaulted
 * term lists and the same language. Reports read nothing else (not the clock, not the user).
 * Once either number moves, every answer kept is dropped. A failed report is never kept.
 *
 * lru-cache keeps them (least recently used out first, past the count or the size); the data state
 * is one string beside it: a new one empties it.
 */
import { LRUCache } from "lru-cache";

export interface AnswerKey {
  kind: string;
  query: unknown;
  defaulted: string[];
  language: string;
}

/** Answers kept at most. */
export const ANSWERS_KEPT = 16;
/**
 * Their size as JSON at most, characters, each and in all: a screening is ≈ 25 kB, but a control
 * chart or an overview by day over ten years of a large plant comes to ≈ 1–1.5 MB (a point a day,
 * ≈ 430 characters each), and the objects take a few times their JSON on the report thread's heap.
 */
export const ANSWER_MAX_CHARS = 2_000_000;
export const ANSWERS_MAX_CHARS = 8_000_000;

export function answerKey(k: AnswerKey): string {
  return JSON.stringify([k.kind, k.query, [...k.defaulted].sort(), k.language]);
}

export class ReportAnswers {
  private readonly entries: LRUCache<string, { value: unknown }>;
  /** What the data were when the answers kept were worked out (null: nothing kept). */
  private state: string | null = null;

  constructor(kept = ANSWERS_KEPT, maxChars = ANSWER_MAX_CHARS, totalChars = ANSWERS_MAX_CHARS) {
    // Sized by their JSON; one larger than maxEntrySize is not kept.
    this.entries = new LRUCache({
      max: kept,
      maxSize: totalChars,
      maxEntrySize: maxChars,
      sizeCalculation: (e) => Math.max(1, JSON.stringify(e.value)?.length ?? 0),
    });
  }

  /** The answer kept for this key while the data are still `state`; undefined when there is none. */
  get(key: string, state: string): unknown {
    if (state !== this.state) {
      this.entries.clear();
      this.state = null;
      return undefined;
    }
    return this.entries.get(key)?.value;
  }

  /** Keeps an answer worked out on data that were `state` throughout (unless larger than an answer may be). */
  put(key: string, state: string, value: unknown) {
    if (state !== this.state) {
      this.entries.clear();
      this.state = state;
    }
    // (An answer too large to keep also takes the one kept before under its key out: lru-cache's set.)
    this.entries.set(key, { value });
  }

  get size() {
    return this.entries.size;
  }

  /** Their size as JSON, characters. */
  get totalSize() {
    return this.entries.calculatedSize;
  }
}
