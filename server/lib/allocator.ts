/**
 * The C library's memory allocator, as the server is started with it (by `npm start`'s supervisor
 * and by deploy/strandsight.service).
 *
 * Node's typed arrays and the report threads' working arrays take their memory from glibc's malloc.
 * glibc hands a block of 128 kB or more over in its own mapping, given back to the system when it
 * is freed; but once such a block is freed, glibc raises that threshold to the block's size (up to
 * 32 MB), so the next arrays of 20–30 MB (a screening's per-slab arrays at five million slabs) come
 * from its heaps instead, where what is freed stays the process's memory wherever a smaller block
 * sits above it. Measured at five million slabs on the 2-core machine: in one process, RSS 805 MB
 * after three screenings with the moving threshold, 656–664 MB with it held at 128 kB; the real
 * server (tests/bench/start.bench.ts, one helper thread) peaked at 825–949 MB with the moving
 * threshold and 702–806 MB held, 587–604 MB held with neither the helper nor columns in memory
 * (635–774 MB before). The screenings took the same time either way.
 *
 * MALLOC_MMAP_THRESHOLD_ is glibc's documented tunable (mallopt(3): M_MMAP_THRESHOLD); set, it
 * also stops the moving. It is read when the process starts, so it is set in the environment of the
 * process that runs the server, never from inside it. Other C libraries ignore it. A value the
 * operator set is kept.
 */
export const ALLOCATOR_ENV: Readonly<Record<string, string>> = {
  // glibc's own starting value, held there.
  MALLOC_MMAP_THRESHOLD_: "131072",
};

/** The environment for a server process: `env` with the allocator's settings where it has none of its own. */
export function withAllocatorEnv<T extends Record<string, string | undefined>>(env: T): T & Record<string, string | undefined> {
  const out: Record<string, string | undefined> = { ...env };
  for (const [k, v] of Object.entries(ALLOCATOR_ENV)) if (out[k] === undefined || out[k] === "") out[k] = v;
  return out as T & Record<string, string | undefined>;
}

/** Whether this process was started with the allocator's settings (for the start-up log). */
export const allocatorSet = () => Object.keys(ALLOCATOR_ENV).every((k) => (process.env[k] ?? "") !== "");
