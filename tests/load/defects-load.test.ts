import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { describeLoad, runLoad } from "../helpers/load";
import { startTestServer, TEST_PASSWORD } from "../helpers/test-app";

/**
 * 32 clients post defects for 30 s (LOAD_SECONDS) over loopback while 4 read reports. Pass: every
 * post answered 201 is a row (no lost writes), no post was answered otherwise, nothing 5xx. The
 * p95 latency is printed, not asserted (speed belongs to `npm run bench`).
 */
let server: Awaited<ReturnType<typeof startTestServer>>;
beforeAll(async () => {
  server = await startTestServer({ scale: 0.02 });
});
afterAll(() => server?.stop());

const SECONDS = Number(process.env.LOAD_SECONDS ?? 30);

describe("defects under load", () => {
  it(
    `when 32 clients post defects for ${SECONDS} s while reports are read, then every 201 is a row, nothing is lost and nothing answers 5xx`,
    async () => {
      const before = server.db.$client.prepare("select count(*) from defects").pluck().get() as number;
      const r = await runLoad({ baseUrl: server.baseUrl, db: server.db, password: TEST_PASSWORD, writers: 32, readers: 4, seconds: SECONDS });
      const d = describeLoad(r);
      console.log(
        `load: ${d.posts} posts in ${SECONDS} s (${d.postsPerSecond.toFixed(0)}/s), ${d.created201} answered 201, ${d.rows} rows; p50 ${d.postP50.toFixed(0)} ms, p95 ${d.postP95.toFixed(0)} ms; ${d.reads} report reads, p95 ${d.readP95.toFixed(0)} ms; 5xx: ${d.fiveHundreds}`,
      );
      expect(d.posts).toBeGreaterThan(32);
      expect(d.reads).toBeGreaterThan(0);
      expect(d.fiveHundreds).toBe(0);
      expect(r.posts.filter((p) => p.status !== 201)).toEqual([]);
      expect(r.reads.filter((p) => p.status !== 200)).toEqual([]);
      expect(d.rows).toBe(d.created201);
      expect(server.db.$client.prepare("select count(*) from defects").pluck().get()).toBe(before + d.created201);
      expect(server.db.$client.pragma("integrity_check", { simple: true })).toBe("ok");
    },
    SECONDS * 1000 + 60_000,
  );
});
