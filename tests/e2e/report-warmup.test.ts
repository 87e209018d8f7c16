import { execFileSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { startReportCache } from "../../server/services/report-cache";
import { apartFromOffline, collectPageErrors, DESKTOP, signInAs, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";

/**
 * Issue 14 in the browser: after a server start the reports' slab data load in the background; a
 * report screen opened meanwhile shows that it is waiting (not an error) and turns into the report by
 * itself. The load is held at its first read by making the snapshot's path a named pipe (mkfifo):
 * opening it waits until the test writes to it — no timing, no switch in the code.
 */
const env = useAppAndBrowser({ scale: 0.05 });

describe("reports warming up after a start", () => {
  it("when a quality engineer opens screening while the slab data load, then the screen says the reports are warming up (tablet and desktop, offline too) and shows the report by itself once they are in", async () => {
    const fifo = path.join(env.server.dir, "held.report-cache");
    execFileSync("mkfifo", [fifo]);
    const cache = startReportCache(env.server.db, { snapshotFile: fifo });
    let released = false;
    const release = async () => {
      if (released) return;
      released = true;
      const w = await fs.promises.open(fifo, "w");
      await w.write("not a snapshot\n");
      await w.close();
    };
    try {
      const pages = [];
      for (const [name, viewport] of [
        ["tablet", TABLET],
        ["desktop", DESKTOP],
      ] as const) {
        const context = await env.browser.newContext({ viewport });
        const page = await context.newPage();
        page.setDefaultTimeout(20_000);
        // The 503s of the waiting reports are logged by the browser; they are the answer, not a fault.
        const errors = collectPageErrors(page, [401, 503]);
        await signInAs(page, env.server.baseUrl, "quality", TEST_PASSWORD);
        await page.goto(`${env.server.baseUrl}/reports/screening?adjustFor=none`);
        const waiting = page.getByTestId("report-warming-up");
        await waiting.waitFor();
        expect(await waiting.textContent()).toMatch(
          /^Reports are warming upThe server is loading the slab data \(about \d+ s\), as it does after a start or a large import\. This report appears by itself when they are in: nothing is lost, there is nothing to do\.$/,
        );
        expect(await page.getByTestId("report-refused").count()).toBe(0);
        // The filters and the cautions are there to use while waiting.
        await page.getByTestId("report-cautions").waitFor();
        await snap(page, `report-warming-up-${name}`);
        pages.push({ page, context, errors, name });
      }
      // Offline while waiting: the tablet's screen keeps saying what it waits for.
      const tablet = pages[0]!;
      await tablet.context.setOffline(true);
      await tablet.page.waitForTimeout(3_000);
      await snap(tablet.page, "report-warming-up-tablet-offline");
      await tablet.context.setOffline(false);

      expect(cache.status().state).toBe("warming");
      await release();
      await cache.whenReady();
      for (const { page, errors, name } of pages) {
        // Asked again by itself at the server's Retry-After (2–10 s): no click, no reload.
        await page.getByTestId("screening-table").waitFor({ timeout: 60_000 });
        expect(await page.getByTestId("report-warming-up").count()).toBe(0);
        await snap(page, `report-warmed-up-${name}`);
        // A request the tablet had under way as it went offline fails with the network's words in the
        // console (the screen's own ask again, when its Retry-After fell just then): not a fault of the app.
        expect(name === "tablet" ? apartFromOffline(errors) : errors).toEqual([]);
      }
    } finally {
      await release();
      await cache.close();
    }
  }, 180_000);
});
