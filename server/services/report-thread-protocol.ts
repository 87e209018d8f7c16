/** The messages between the main thread (report-thread.ts) and the report thread (report-thread-worker.ts). */
import type { Language } from "@shared/i18n/languages";
import type { Said } from "../lib/http-error";
import type { ReportCacheStatus } from "./report-cache";

export interface ReportThreadData {
  databaseFile: string;
  logLevel: string;
  /** The thread's nice value (0: as the server's). */
  nice: number;
  /** How screenings are shared out over helper threads (reports/screening-threads.ts); unset: its defaults. */
  screening?: { threads?: number; sharedFrom?: number };
  /** Memory for the condition columns, MB (report-cache-disk.ts; unset: its default). */
  columnsMb?: number;
  /** Where the condition columns' files go (unset: beside the database). */
  columnsDir?: string;
}

export type ToReportThread =
  | { type: "changed"; slabIds: number[] | null }
  | { type: "report"; id: number; kind: string; query: unknown; defaulted: string[]; language: Language }
  | { type: "start"; id: number; token: number; snapshotFile: string | null; sliceMs?: number }
  | { type: "cache"; id: number; token: number; op: "whenReady" | "save" | "close"; version?: number }
  | { type: "exit" };

/** An error thrown in the thread: an HttpError keeps its status, code, words (and their catalogue keys) and details. */
export type ThreadError =
  { http: true; status: number; code: string; message: string; said?: Said[]; details?: unknown } | { http: false; message: string; stack?: string };

export type FromReportThread =
  | { type: "online" }
  | { type: "log"; line: string }
  | { type: "started"; id: number; kind: string }
  /** `reused`: a report's answer given again, nothing it reads having changed (report-answers.ts); absent for other replies. */
  | { type: "reply"; id: number; ok: true; value: unknown; status: ReportCacheStatus | null; reused?: boolean }
  | { type: "reply"; id: number; ok: false; error: ThreadError; status: ReportCacheStatus | null };

/**
 * A term list the engineer left out is marked `defaulted` (shared/api/reports.ts: a property that is
 * not enumerable, so it never shows in the JSON). Copying a message between threads keeps only
 * enumerable properties: the keys of the marked lists go beside the query and the mark is put back there.
 */
export function defaultedKeys(query: unknown): string[] {
  if (!query || typeof query !== "object") return [];
  return Object.entries(query)
    .filter(([, v]) => Array.isArray(v) && (v as { defaulted?: boolean }).defaulted === true)
    .map(([k]) => k);
}

export function markDefaulted(query: unknown, keys: string[]) {
  for (const k of keys) {
    const v = (query as Record<string, unknown>)[k];
    if (Array.isArray(v)) Object.defineProperty(v, "defaulted", { value: true });
  }
}
