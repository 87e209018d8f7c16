/**
 * Fault injection for tests/faults/supervisor.test.ts: loaded into the real server process with
 * NODE_OPTIONS=--import, it makes that process fail as a bug would — an error thrown from a timer
 * (nothing catches it) or a promise rejected with nobody waiting for it. Nothing is replaced or
 * mocked: the server's own crash handling and the supervisor see a real crash.
 *
 * CRASH_HOOK=exception | rejection: on SIGUSR2. CRASH_HOOK=start: during start-up, as soon as the
 * server has installed its crash handler (server/index.ts, before it opens the database).
 */
const isServer = (process.argv[1] ?? "").replaceAll("\\", "/").endsWith("server/index.ts");
const mode = process.env.CRASH_HOOK;

function decodeFailure() {
  return new Error("the mould level record of strand 2 could not be decoded", {
    cause: new RangeError("segment length 4294967295 is larger than the record (512 bytes)"),
  });
}

if (isServer && mode === "exception") {
  process.on("SIGUSR2", () =>
    setImmediate(() => {
      throw decodeFailure();
    }),
  );
}
if (isServer && mode === "rejection") {
  process.on("SIGUSR2", () => void Promise.reject(decodeFailure()));
}
if (isServer && mode === "start") {
  const poll = setInterval(() => {
    if (process.listenerCount("uncaughtException") === 0) return;
    clearInterval(poll);
    throw decodeFailure();
  }, 5);
}
