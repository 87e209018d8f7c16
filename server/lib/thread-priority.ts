import fs from "node:fs";
import os from "node:os";

/**
 * Lowers the calling thread's priority (nice), so the write path gets the processor first when both
 * want it (the report thread, the risk training thread). Linux keeps the nice value per thread;
 * setpriority with the thread's own id (from /proc/thread-self) changes this thread alone. Elsewhere,
 * or if refused, the thread runs at the normal priority.
 */
export function lowerThisThreadPriority(nice: number) {
  if (nice <= 0) return;
  try {
    const tid = Number(fs.readlinkSync("/proc/thread-self").split("/").pop());
    if (Number.isInteger(tid) && tid > 0) os.setPriority(tid, nice);
  } catch {
    // not Linux, or not allowed: the normal priority
  }
}
