import ExcelJS from "exceljs";
import { describe, expect, it } from "vitest";
import type { RateByVariable } from "../../shared/api/reports";
import { num, pct, pValue } from "../../src/lib/format";
import { collectPageErrors, DESKTOP, readRows, signInAs, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";

// A fifth of the demo plant: a few thousand slabs, enough slag spots for every bin to hold some.
const env = useAppAndBrowser({ scale: 0.2 });

/** The bins as the screen writes them: edges with one decimal more than casting speed's two, n, rate, interval. */
const screenBins = (bins: RateByVariable["bins"]) =>
  bins.map((b) => ({
    lower: num(b.lower, 3),
    upper: num(b.upper, 3),
    slabs: b.slabs.toLocaleString("en-GB"),
    affected: b.affected.toLocaleString("en-GB"),
    rate: pct(b.rate),
    ciLower: pct(b.ciLower),
    ciUpper: pct(b.ciUpper),
  }));

describe("reports in the browser", () => {
  it("when a quality engineer opens rate against casting speed for SLG, then the chart, n and tests show, the filters live in the URL, the workbook equals the screen, and the saved report is listed", async () => {
    const context = await env.browser.newContext({ viewport: DESKTOP, acceptDownloads: true });
    const page = await context.newPage();
    // A step that never comes fails within seconds, naming the step, rather than at the test's timeout.
    page.setDefaultTimeout(10_000);
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "quality", TEST_PASSWORD);

    // From the menu to the reports home, and on to the report.
    await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Reports" }).click();
    await page.getByRole("heading", { level: 1, name: "Reports" }).waitFor();
    await page.getByTestId("report-cautions").waitFor();
    // The four cautions in full on the reports home; on a report one line, the four a tap away.
    expect(await page.getByTestId("report-cautions-full").isVisible()).toBe(true);
    await page.getByRole("link", { name: /^Rate against a variable/ }).click();
    await page.getByRole("heading", { level: 1, name: "Rate against a variable" }).waitFor();
    await page.getByTestId("report-cautions").getByText("Association is not causation.").waitFor();
    expect(await page.getByTestId("report-cautions-full").isVisible()).toBe(false);
    await page.getByTestId("report-cautions").getByText("All four cautions").click();
    await page
      .getByTestId("report-cautions-full")
      .getByText(/hot-yard, crane and PPE rules/)
      .waitFor();
    await page.getByTestId("report-cautions").getByText("Fewer words").click();
    await expect.poll(() => page.getByTestId("report-cautions-full").isVisible()).toBe(false);

    // One defect type, SLG, from the filter bar's list; casting speed as the variable; 8 bins.
    const picker = page.getByTestId("filter-defect-type");
    await picker.locator("summary").click();
    // The box is drawn from the address, which the click changes a moment later: click, then wait
    // for it to show checked (Playwright's check() looks at once and may see the old state).
    const slg = picker.getByRole("checkbox", { name: /^SLG / });
    await slg.click();
    await expect.poll(() => slg.isChecked()).toBe(true);
    await page.getByRole("heading", { level: 1 }).click();
    await page.getByTestId("variable-select").selectOption("casting_speed_m_min");
    await page.getByTestId("bins-select").selectOption("8");
    await page.waitForURL(
      (u) => u.searchParams.get("defectType") === "SLG" && u.searchParams.get("variable") === "casting_speed_m_min" && u.searchParams.get("bins") === "8",
    );
    expect(await picker.getByTestId("filter-defect-type-summary").textContent()).toBe("SLG");

    // The chart draws on a canvas in its container.
    await page.getByTestId("rate-chart").locator("canvas").first().waitFor();
    await page.getByTestId("distribution-chart").locator("canvas").first().waitFor();

    // The API's answer for the very query string of the screen.
    const query = new URL(page.url()).search.slice(1);
    const api = await env.server.agentFor("quality");
    const res = await api.get(`/api/reports/rate-by-variable?${query}`);
    expect(res.status).toBe(200);
    const report = res.body as RateByVariable;
    expect(report.affected).toBeGreaterThan(20);
    expect(report.bins.length).toBeGreaterThan(3);
    const slabsInDb = env.server.db.$client.prepare("select count(*) from slab_conditions where casting_speed_m_min is not null").pluck().get() as number;
    expect(report.slabs).toBe(slabsInDb);

    // n, the bins and the tests on screen are the API's.
    await expect.poll(() => readRows(page, "[data-testid=bin-row]")).toEqual(screenBins(report.bins));
    expect(await page.getByTestId("summary-slabs").textContent()).toBe(report.slabs.toLocaleString("en-GB"));
    expect(await page.getByTestId("summary-affected").textContent()).toBe(
      `${report.affected.toLocaleString("en-GB")} affected of n = ${report.slabs.toLocaleString("en-GB")}`,
    );
    const testP = (key: string) => page.locator(`[data-testid=test-row][data-test=${key}] [data-field=p]`).textContent();
    expect(await testP("spearman")).toBe(pValue(report.spearman.p));
    expect(await testP("logistic")).toBe(pValue(report.logistic.p));
    expect(await testP("mannWhitney")).toBe(pValue(report.mannWhitney.p));
    expect(await page.locator("[data-testid=test-row][data-test=mannWhitney] [data-field=statistic]").textContent()).toBe(num(report.mannWhitney.u, 0));
    await snap(page, "report-rate-by-variable-desktop");

    // A reload keeps every filter and shows the same numbers.
    await page.reload();
    await page.getByRole("heading", { level: 1, name: "Rate against a variable" }).waitFor();
    expect(new URL(page.url()).search.slice(1)).toBe(query);
    expect(await page.getByTestId("filter-defect-type-summary").textContent()).toBe("SLG");
    expect(await page.getByTestId("bins-select").inputValue()).toBe("8");
    await expect.poll(() => readRows(page, "[data-testid=bin-row]")).toEqual(screenBins(report.bins));

    // Export: the browser receives the workbook; its Bins sheet holds the API's numbers, which format to the screen's.
    const [download] = await Promise.all([page.waitForEvent("download"), page.getByTestId("export-excel").click()]);
    expect(download.suggestedFilename()).toMatch(/^strandsight-rate-by-variable-\d{4}-\d{2}-\d{2}\.xlsx$/);
    const file = await download.path();
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.readFile(file);
    const sheet = wb.getWorksheet("Bins")!;
    expect(sheet.getRow(1).values).toEqual([undefined, "From (m/min)", "To (m/min)", "Slabs", "Affected slabs", "Rate", "95 % CI lower", "95 % CI upper"]);
    const keys = ["lower", "upper", "slabs", "affected", "rate", "ciLower", "ciUpper"] as const;
    const sheetBins = Array.from({ length: sheet.rowCount - 1 }, (_, i) =>
      Object.fromEntries(keys.map((k, c) => [k, sheet.getRow(i + 2).getCell(c + 1).value as number])),
    );
    expect(sheetBins).toEqual(report.bins);
    expect(screenBins(sheetBins as RateByVariable["bins"])).toEqual(await readRows(page, "[data-testid=bin-row]"));
    const params = Object.fromEntries(
      wb
        .getWorksheet("Parameters")!
        .getSheetValues()
        .slice(2)
        .map((r) => [(r as unknown[])[1], (r as unknown[])[2]]),
    );
    expect(params).toMatchObject({ "Defect type": "SLG", Variable: "Casting speed (m/min)", Bins: "8" });
    await page.getByText(/^Saved as strandsight-rate-by-variable-.*\.xlsx/).waitFor();

    // Save the report; the reports home lists it, and its link opens the same question.
    await page.getByRole("button", { name: "Save this report" }).click();
    const name = "Slag spots against casting speed (browser test)";
    await page.getByLabel("Name of the saved report").fill(name);
    await page.getByRole("button", { name: "Save", exact: true }).click();
    await page.getByTestId("report-saved").waitFor();
    const stored = env.server.db.$client.prepare("select report_kind, query from saved_reports where name = ?").get(name) as {
      report_kind: string;
      query: string;
    };
    expect(stored).toEqual({ report_kind: "rate-by-variable", query });
    await page.getByRole("link", { name: "see your saved reports" }).click();
    await page.getByRole("heading", { level: 1, name: "Reports" }).waitFor();
    const row = page.getByTestId("saved-report-row").filter({ hasText: name });
    expect(await row.locator("[data-field=kind]").textContent()).toBe("Rate against a variable");
    await snap(page, "reports-home-with-saved-desktop");
    await row.getByRole("link", { name }).click();
    await page.waitForURL((u) => u.pathname === "/reports/rate-by-variable" && u.search.slice(1) === query);
    await expect.poll(() => readRows(page, "[data-testid=bin-row]")).toEqual(screenBins(report.bins));

    expect(errors).toEqual([]);
    await context.close();
  });

  it("when the process window asks for 100 slabs a cell, then the thin cells are greyed on screen as the API marks them, and a warning says so", async () => {
    const context = await env.browser.newContext({ viewport: TABLET });
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "quality", TEST_PASSWORD);
    const query = "defectType=SLG&x=casting_speed_m_min&y=embr_current_a&xBins=6&yBins=6&binning=quantile&minN=100";
    await page.goto(`${env.server.baseUrl}/reports/process-window?${query}`);
    await page.getByTestId("window-heatmap").locator("canvas").first().waitFor();
    const api = await env.server.agentFor("quality");
    const body = (await api.get(`/api/reports/process-window?${query}`)).body as { cells: { sparse: boolean; slabs: number }[] };
    const sparse = body.cells.filter((c) => c.sparse).length;
    expect(sparse).toBeGreaterThan(0);
    expect(await page.locator("[data-testid=cell][data-sparse]").count()).toBe(sparse);
    expect(await page.getByTestId("small-n-warning").textContent()).toContain(`${sparse} cell${sparse === 1 ? "" : "s"} hold fewer than 100 slabs`);
    await page.getByTestId("report-cautions").getByText("Association is not causation.").waitFor();
    await snap(page, "report-process-window-sparse-tablet");
    expect(errors).toEqual([]);
    await context.close();
  });

  it("when an inspector opens a report's address, then the screen is refused and no chart code loads", async () => {
    const context = await env.browser.newContext({ viewport: TABLET });
    const page = await context.newPage();
    const scripts: string[] = [];
    page.on("request", (r) => {
      if (r.resourceType() === "script") scripts.push(r.url());
    });
    await signInAs(page, env.server.baseUrl, "inspector", TEST_PASSWORD);
    await page.goto(`${env.server.baseUrl}/reports/rate-by-variable?defectType=SLG`);
    await page.getByRole("heading", { name: "Not open to your role" }).waitFor();
    expect(scripts.filter((u) => /chart|echarts/.test(u))).toEqual([]);
    await context.close();
  });
});
