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
