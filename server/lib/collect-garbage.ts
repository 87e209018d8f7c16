/**
 * A full garbage collection now, where one large block of memory was just let go and nothing else
 * would collect it soon. The report cache's columns sit on shared memory (SharedArrayBuffer), which
 * the system gets back only when the collector finds their arrays unreachable; after a rebuild moves
 * columns into files (report-cache-disk.ts) the thread allocates nothing for a while, so at five
 * million slabs ≈ 420 MB stayed in the server's RSS until the first report's arrays set off a
 * collection (measured: 1,077 MB once ready after a rebuild, 699 MB from a snapshot).
 *
 * Node exposes the collector only behind V8's --expose-gc flag; set here, at run time, it gives the
 * `gc` function to new contexts only (a context made for this call), and it changes nothing else.
 */
import v8 from "node:v8";
import vm from "node:vm";

let gc: (() => void) | null = null;

export function collectGarbage() {
  if (!gc) {
    v8.setFlagsFromString("--expose-gc");
    gc = vm.runInNewContext("gc") as () => void;
  }
  gc();
}

/**
 * From this many slabs a full garbage collection follows each report, once its answer is sent
 * (report-thread-worker.ts). A report lets go of tens of MB of arrays (its scope's rows and
 * affected slabs on shared memory, a condition's values), which the collector otherwise takes back
 * only much later: measured at five million slabs, RSS crept from 690 to 878 MB over six reports
 * in a row (overview, control chart, rate, window, model) and stayed at 640–680 MB with a
 * collection after each, which took 13–35 ms of the report thread (the next report waits that
 * long; none of the answers does). The real server's peak while those reports ran after the
 * screenings: 736–806 MB without, 688–764 MB with.
 */
export const COLLECT_FROM_SLABS = 1_000_000;
/** …after a report that took at least this long (a quick one let go of little). */
export const COLLECT_AFTER_MS = 100;

/**
 * Whether to collect after a report that took `ms`, the report cache as `cache` says: on a large
 * plant whose facts are in, not while they load ("warming up" refusals) and not after a quick report.
 */
export function collectsAfterReport(cache: { state: string; slabs: number | null } | null, ms: number): boolean {
  return cache !== null && cache.state !== "warming" && (cache.slabs ?? 0) >= COLLECT_FROM_SLABS && ms >= COLLECT_AFTER_MS;
}
