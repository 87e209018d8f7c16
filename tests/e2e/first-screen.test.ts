import { describe, expect, it } from "vitest";
import { DESKTOP, signInAs, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";

/**
 * A screen opened cold (an address typed or a link followed from outside, empty cache): the page
 * names the screen's code and its first data request (server/lib/screen-preload.ts, screen-data.ts),
 * so both are asked for before the app's first script has arrived, and the screen takes the answer
 * already on its way instead of asking again.
 */
const env = useAppAndBrowser({ scale: 0.02 });

interface Entry {
  path: string;
  start: number;
  end: number;
}

async function openCold(role: string, address: string, ready: string) {
  const signIn = await env.browser.newContext({ viewport: DESKTOP });
  const first = await signIn.newPage();
  await signInAs(first, env.server.baseUrl, role, TEST_PASSWORD);
  const storageState = await signIn.storageState();
  await signIn.close();
  const context = await env.browser.newContext({ viewport: DESKTOP, storageState });
  const page = await context.newPage();
  const said: string[] = [];
  page.on("console", (m) => void (["error", "warning"].includes(m.type()) && said.push(m.text())));
  const asked: string[] = [];
  page.on("request", (r) => void asked.push(new URL(r.url()).pathname + new URL(r.url()).search));
  await page.goto(env.server.baseUrl + address);
  await page.locator(ready).first().waitFor();
  // A preload left unused is reported by the browser a few seconds after the load.
  await page.waitForTimeout(3500);
  const entries = (await page.evaluate(
    `performance.getEntriesByType("resource").map((e) => ({ path: new URL(e.name).pathname + new URL(e.name).search, start: e.startTime, end: e.responseEnd }))`,
  )) as Entry[];
  await context.close();
  return { asked, entries, said };
}

const mainScript = (entries: Entry[]) => entries.find((e) => /^\/assets\/index-[\w-]+\.js$/.test(e.path))!;

describe("a screen opened cold", () => {
  it("when a quality engineer opens the overview report by its address, then its data and its code are asked for before the first script has arrived, the data once, and nothing is left unused", async () => {
    const { asked, entries, said } = await openCold("quality", "/reports/overview?period=month", "[data-testid=period-chart] canvas");
    const data = "/api/reports/overview?period=month";
    expect(asked.filter((p) => p === data)).toHaveLength(1);
    const main = mainScript(entries);
    const dataEntry = entries.find((e) => e.path === data)!;
    expect(dataEntry.start).toBeLessThan(main.end);
    const screenCode = entries.find((e) => /^\/assets\/report-overview-[\w-]+\.js$/.test(e.path))!;
    expect(screenCode.start).toBeLessThan(main.end);
    const chartCode = entries.find((e) => /^\/assets\/chart-theme-[\w-]+\.js$/.test(e.path))!;
    expect(chartCode.start).toBeLessThan(main.end);
    expect(said).toEqual([]);
  });

  it("when a claims officer opens the heats list sorted by defects, then the list is asked for once, before the first script has arrived", async () => {
    const { asked, entries, said } = await openCold("claims", "/heats?sort=defects&dir=desc", "[data-testid=heat-row]");
    const data = "/api/heats?sort=defects&dir=desc";
    expect(asked.filter((p) => p.startsWith("/api/heats"))).toEqual([data]);
    expect(entries.find((e) => e.path === data)!.start).toBeLessThan(mainScript(entries).end);
    expect(said).toEqual([]);
  });
});
