/**
 * Start-up failures that a restart cannot fix (a bad setting, the port taken, a database or folder
 * that cannot be written). The server exits with EXIT_CANNOT_START, and the supervisor
 * (server/supervisor.ts) and the systemd unit (deploy/strandsight.service, RestartPreventExitStatus)
 * stop instead of restarting it in a loop.
 */

/** EX_CONFIG from sysexits.h: "something was found in an unconfigured or misconfigured state". */
export const EXIT_CANNOT_START = 78;

/** A start-up failure with a message for the person starting the app (printed without a stack). */
export class StartupError extends Error {
  override name = "StartupError";
}

/** File-system error codes that mean "this path cannot be created or written" — no restart helps. */
const PATH_PROBLEMS: Record<string, string> = {
  EACCES: "permission denied",
  EPERM: "operation not permitted",
  EROFS: "the disk is mounted read-only",
  ENOTDIR: "a part of the path is a file, not a folder",
  EISDIR: "it is a folder, not a file",
  ENOSPC: "the disk is full",
  EDQUOT: "the disk quota is used up",
};

/**
 * A plain message for a file-system error met while starting (for example writing the local
 * session secret next to the database), or null when the error is of another kind.
 */
export function describePathError(err: unknown): string | null {
  const e = err as NodeJS.ErrnoException;
  if (!e || typeof e !== "object" || typeof e.code !== "string" || !e.path) return null;
  // mkdir of a folder where a file of that name already is.
  const problem = e.code === "EEXIST" && e.syscall === "mkdir" ? "a file is in the way where a folder should be" : PATH_PROBLEMS[e.code];
  if (!problem) return null;
  return [
    `Strandsight cannot start: it cannot create or write ${e.path} (${problem}, ${e.code}).`,
    "Check that the folder exists, that it belongs to the user the app runs as (or is writable by it),",
    "and that the disk is mounted read-write and not full. DATABASE_FILE and UPLOAD_DIR set where the app writes.",
  ].join("\n");
}
