import { describe, expect, it } from "vitest";
import { CONDITION_SOURCE_LABELS } from "../../shared/variables";
import { collectPageErrors, DESKTOP, signInAs, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";

const env = useAppAndBrowser({ scale: 0.02 });

const en = (v: number, digits: number) => v.toLocaleString("en-GB", { minimumFractionDigits: digits, maximumFractionDigits: digits });

describe("heats, heat page and slab page", () => {
  it("when a quality engineer sorts by defects, searches a heat and opens it, then the chart, the slabs and a slab's conditions with their sources show", async () => {
    const context = await env.browser.newContext({ viewport: DESKTOP });
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    const scripts: string[] = [];
    page.on("request", (r) => {
      if (r.resourceType() === "script") scripts.push(r.url());
    });
    await signInAs(page, env.server.baseUrl, "quality", TEST_PASSWORD);
    await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Heats" }).click();
    await page.getByRole("heading", { level: 1, name: "Heats" }).waitFor();
    const total = env.server.db.$client.prepare("select count(*) from heats").pluck().get() as number;
    await page.getByTestId("heats-count").getByText(`of ${total} heats`).waitFor();

    // Sort by defects: the server sorts, the most defects come first.
    await page.getByRole("button", { name: /^Defects/ }).click();
    await page.waitForURL(/sort=defects&dir=desc/);
    await page.locator("th[aria-sort=descending]").getByText("Defects").waitFor();
    const defectsCol = page.locator("[data-testid=heat-row] td[data-col=defects]");
    await expect
      .poll(async () => {
        const counts = (await defectsCol.allTextContents()).map(Number);
        return counts.length > 1 && counts.every((n, i) => i === 0 || counts[i - 1]! >= n);
      })
      .toBe(true);
    const counts = (await defectsCol.allTextContents()).map(Number);
    expect(counts[0]).toBeGreaterThanOrEqual(counts[1]!);
    expect(counts[0]).toBeGreaterThan(0);
    await snap(page, "heats-list-by-defects-desktop");

    // Search for a heat far down the list, one whose slabs take their conditions from process samples.
    const heatNo = env.server.db.$client
      .prepare(
        `select h.heat_no from heats h join slabs s on s.heat_id = h.id join slab_conditions c on c.slab_id = s.id
         where c.casting_speed_source = 'samples' group by h.id order by h.cast_start limit 1 offset 3`,
      )
      .pluck()
      .get() as string;
    await page.getByRole("searchbox").fill(heatNo);
    await page.waitForURL(new RegExp(`q=${heatNo}`));
    const rows = page.getByTestId("heat-row");
    await expect.poll(() => rows.locator("td[data-col=heatNo]").allTextContents()).toEqual([heatNo]);
    await rows.first().click();
    await page.getByRole("heading", { level: 1, name: `Heat ${heatNo}` }).waitFor();

    // The process samples chart draws on a canvas; the series can be switched.
    await page.getByTestId("samples-chart").locator("canvas").first().waitFor();
    // The chart library came as its own chunk, with the heat page only (the inspector test relies on this name).
    expect(scripts.some((u) => u.includes("samples-chart"))).toBe(true);
    await page.getByRole("radio", { name: /Mold level/ }).click();
    expect(await page.getByRole("radio", { name: /Mold level/ }).getAttribute("aria-checked")).toBe("true");
    expect(await page.getByTestId("samples-chart").getAttribute("aria-label")).toContain("Mold level");
    // Every slab of the heat is listed.
    const slabCount = env.server.db.$client
      .prepare("select count(*) from slabs s join heats h on h.id = s.heat_id where h.heat_no = ?")
      .pluck()
      .get(heatNo) as number;
    expect(await page.getByTestId("heat-slab-row").count()).toBe(slabCount);
    expect(slabCount).toBeGreaterThan(0);
    await snap(page, "heat-page-desktop");

    // The first slab's page shows its resolved conditions and where each came from, as the API says.
    const firstSlab = (await page.getByTestId("heat-slab-row").first().getByRole("link").first().textContent())!;
    await page.getByRole("link", { name: firstSlab, exact: true }).click();
    await page.getByRole("heading", { level: 1, name: `Slab ${firstSlab}` }).waitFor();
    const api = await env.server.agentFor("quality");
    const slab = (await api.get(`/api/slabs/${firstSlab}`)).body;
    expect(slab.conditions.castingSpeedSource).toBe("samples");
    const speedRow = page.getByTestId("condition-casting_speed_m_min");
    expect(await speedRow.getByTestId("condition-value").textContent()).toBe(`${en(slab.conditions.castingSpeedMPerMin, 2)} m/min`);
    expect(await speedRow.getByTestId("condition-source").textContent()).toBe(`${CONDITION_SOURCE_LABELS.samples}(n = ${slab.conditions.sampleCount})`);
    const superheatRow = page.getByTestId("condition-superheat_c");
    expect(await superheatRow.getByTestId("condition-value").textContent()).toBe(`${en(slab.conditions.superheatC, 1)} °C`);
    expect(await superheatRow.getByTestId("condition-source").textContent()).toContain(CONDITION_SOURCE_LABELS[slab.conditions.superheatSource as "samples"]);
    expect(await page.getByTestId("slab-weight").textContent()).toContain(`${en(slab.weightT, 2)} t`);
    expect(await page.getByTestId("slab-sample-count").textContent()).toContain(`${slab.conditions.sampleCount} process samples`);
    await snap(page, "slab-page-desktop");
    expect(errors).toEqual([]);
    await context.close();
  });

  it("when an inspector finds a slab in the yard at tablet size, then its page opens with conditions and defects, and no chart library loads", async () => {
    const context = await env.browser.newContext({ viewport: TABLET });
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    const scripts: string[] = [];
    page.on("request", (r) => {
      if (r.resourceType() === "script") scripts.push(r.url());
    });
    // A slab with defects on record.
    const slabId = env.server.db.$client
      .prepare(
        "select s.slab_id from slabs s join defects d on d.slab_id = s.id where d.deleted_at is null group by s.id order by count(*) desc, s.slab_id limit 1",
      )
      .pluck()
      .get() as string;
    const defects = env.server.db.$client
      .prepare("select count(*) from defects d join slabs s on s.id = d.slab_id where s.slab_id = ? and d.deleted_at is null")
      .pluck()
      .get(slabId) as number;
    await signInAs(page, env.server.baseUrl, "inspector", TEST_PASSWORD);
    await page.waitForURL(/\/yard$/);
    await page.getByLabel(/Slab id or heat number/).fill(slabId);
    await page.getByLabel(/Slab id or heat number/).press("Enter");
    // The finder opens the slab's logging screen; its record is one tap from there.
    await page.waitForURL(new RegExp(`/yard/slabs/${slabId}$`));
    const open = page.getByRole("link", { name: "Slab record: conditions and all defects" });
    await open.waitFor();
    // A gloved finger needs a big target.
    expect((await open.boundingBox())!.height).toBeGreaterThanOrEqual(48);
    await open.click();
    await page.getByRole("heading", { level: 1, name: `Slab ${slabId}` }).waitFor();
    await page.getByTestId("slab-conditions").waitFor();
    expect(await page.getByTestId("slab-conditions").locator("[data-testid=condition-source] [data-source]").count()).toBe(6);
    expect(await page.getByTestId("slab-defect").count()).toBe(defects);
    expect(defects).toBeGreaterThan(0);
    // Severity carries a word, not colour alone.
    expect(await page.getByTestId("slab-defect").first().textContent()).toMatch(/(Minor|Moderate|Major|Critical) \([1-4]\)/);
    await snap(page, "slab-page-inspector-tablet");
    expect(scripts.filter((u) => /chart|echarts/.test(u))).toEqual([]);
    expect(errors).toEqual([]);
    await context.close();
  });
});
