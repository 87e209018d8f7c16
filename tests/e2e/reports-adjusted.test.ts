import ExcelJS from "exceljs";
import { describe, expect, it } from "vitest";
import type { Adjusted, BeforeAfter, ControlChart, Overview, RateByVariable, Screening } from "../../shared/api/reports";
import { num, pct, pctRange, pValue, sig } from "../../src/lib/format";
import { collectPageErrors, DESKTOP, readRows, signInAs, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { buildConfoundedPlant, type ConfoundedPlant } from "../helpers/confounded-plant";
import { TEST_PASSWORD } from "../helpers/test-app";

/**
 * Issue 12 in the browser, on a plant of the test's own making (tests/helpers/confounded-plant.ts):
 * slag spots depend on mold-level fluctuation, superheat and brake current; grade family LC is cast
 * faster and has a higher base rate; casting speed itself does nothing. The crude answer points at
 * casting speed; the adjusted one must not.
 */
let plant: ConfoundedPlant;
const env = useAppAndBrowser({
  production: false,
  beforeStart: (db) => {
    plant = buildConfoundedPlant(db);
  },
});

// The screen's formats (src/lib/format.ts, and the interval of two odds ratios as the screens write it).
const ratioRange = (lo: number | null, hi: number | null) => (lo === null || hi === null ? "—" : `${sig(lo, 3)}–${sig(hi, 3)}`);
const relChange = (v: number | null) => {
  if (v === null) return "—";
  const r = Math.round(v * 100);
  return `${r > 0 ? "+" : r < 0 ? "−" : ""}${Math.abs(r)} %`;
};
const queryOf = (url: string) => new URL(url).search.slice(1);

describe("adjusted associations in the browser (issue 12)", () => {
  it("when a quality engineer opens rate against casting speed on the confounded plant and switches on adjust for grade family, then the adjusted odds ratio near 1 stands beside the crude one, as the API answers", async () => {
    const context = await env.browser.newContext({ viewport: DESKTOP });
    const page = await context.newPage();
    page.setDefaultTimeout(15_000);
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "quality", TEST_PASSWORD);

    await page.goto(`${env.server.baseUrl}/reports/rate-by-variable?defectType=SLG&variable=casting_speed_m_min`);
    await page.getByRole("heading", { level: 1, name: "Rate against a variable" }).waitFor();
    await page.getByTestId("rate-chart").locator("canvas").first().waitFor();
    // Off until chosen: the crude answer only.
    expect(await page.getByTestId("rate-adjusted").count()).toBe(0);
    expect(await page.getByTestId("adjust-pick-summary").textContent()).toBe("Nothing (crude only)");

    // Adjust for grade family: ticked in the "Adjust for" list, where it is offered first.
    const pick = page.getByTestId("adjust-pick");
    await pick.locator("summary").click();
    const family = pick.getByRole("checkbox", { name: /^Grade family/ });
    await family.click();
    await expect.poll(() => family.isChecked()).toBe(true);
    await page.getByRole("heading", { level: 1 }).click();
    await page.waitForURL((u) => u.searchParams.get("adjustFor") === "grade_family");
    await page.getByTestId("rate-adjusted").waitFor();

    // The API's answer for the very query string on screen.
    const query = queryOf(page.url());
    const api = await env.server.agentFor("quality");
    const res = await api.get(`/api/reports/rate-by-variable?${query}`);
    expect(res.status).toBe(200);
    const report = res.body as RateByVariable;
    const adj = report.adjusted!;
    expect(adj.adjustFor.map((t) => t.key)).toEqual(["grade_family"]);
    expect(adj.seMethod).toBe("cluster");
    expect(adj.slabs).toBe(plant.slabs);

    // What the plant was built to show: crude well above 1, adjusted near 1 with 1 inside its interval.
    expect(adj.crude.perStep.step).toBe(0.1);
    expect(adj.crude.perStep.ciLower!).toBeGreaterThan(1.1);
    expect(adj.perStep.oddsRatio!).toBeGreaterThan(0.9);
    expect(adj.perStep.oddsRatio!).toBeLessThan(1.15);
    expect(adj.perStep.ciLower!).toBeLessThan(1);
    expect(adj.perStep.ciUpper!).toBeGreaterThan(1);

    // On screen: the API's numbers, side by side.
    await expect.poll(() => page.getByTestId("adjusted-or").textContent()).toBe(sig(adj.perStep.oddsRatio, 3));
    expect(await page.getByTestId("adjusted-ci").textContent()).toBe(ratioRange(adj.perStep.ciLower, adj.perStep.ciUpper));
    expect(await page.getByTestId("adjusted-p").textContent()).toBe(pValue(adj.p));
    expect(await page.getByTestId("adjusted-or-unit").textContent()).toBe(sig(adj.oddsRatio, 3));
    expect(await page.getByTestId("crude-or").textContent()).toBe(sig(adj.crude.perStep.oddsRatio, 3));
    expect(await page.getByTestId("crude-ci").textContent()).toBe(ratioRange(adj.crude.perStep.ciLower, adj.crude.perStep.ciUpper));
    expect(await page.getByTestId("crude-p").textContent()).toBe(pValue(adj.crude.p));
    expect(await page.getByTestId("adjusted-slabs").textContent()).toBe(adj.slabs.toLocaleString("en-GB"));
    expect(await page.getByTestId("adjusted-se").textContent()).toBe("Heat-clustered standard errors");
    expect(adj.changeInEstimate.sentence).toMatch(/grade family/);
    expect(await page.getByTestId("rate-adjusted").getByTestId("change-sentence").textContent()).toContain(adj.changeInEstimate.sentence!);
    // The cautions stay as they are.
    await page.getByTestId("report-cautions").getByText("Association is not causation.").waitFor();
    await snap(page, "report-rate-adjusted-desktop");

    // Split by grade family: one curve and one odds ratio per family, as the API answers.
    await page.getByTestId("split-select").selectOption("grade_family");
    await page.waitForURL((u) => u.searchParams.get("stratifyBy") === "grade_family");
    await page.getByTestId("stratum-chart").locator("canvas").first().waitFor();
    const split = (await api.get(`/api/reports/rate-by-variable?${queryOf(page.url())}`)).body as RateByVariable;
    const strata = split.stratified!.strata;
    expect(strata.map((s) => s.label)).toEqual(["LC", "PER"]);
    await expect
      .poll(() => readRows(page, "[data-testid=stratum-row]"))
      .toEqual(
        strata.map((s) => ({
          label: s.label,
          slabs: s.slabs.toLocaleString("en-GB"),
          affected: s.affected.toLocaleString("en-GB"),
          rate: pct(s.rate),
          ci: pctRange(s.ciLower, s.ciUpper),
          or: sig(s.logistic.perStep.oddsRatio, 3),
          orCi: ratioRange(s.logistic.perStep.ciLower, s.logistic.perStep.ciUpper),
          p: pValue(s.logistic.p),
        })),
      );
    await snap(page, "report-rate-adjusted-split-desktop");
    // A fresh load at tablet size (a chart drawn at desktop width takes a moment to redraw narrower).
    await page.setViewportSize(TABLET);
    await page.reload();
    await page.getByTestId("stratum-chart").locator("canvas").first().waitFor();
    await page.waitForLoadState("networkidle");
    await snap(page, "report-rate-adjusted-split-tablet");

    expect(errors).toEqual([]);
    await context.close();
  });

  it("when the engineer opens the adjusted model and examines four conditions, then the forest plot is drawn and every term's crude and adjusted odds ratios equal the API's; a derived value beside its raw input is refused in the API's words; the workbook and the saved report follow", async () => {
    const context = await env.browser.newContext({ viewport: DESKTOP, acceptDownloads: true });
    const page = await context.newPage();
    page.setDefaultTimeout(15_000);
    // The refused model is a 400 the browser logs: expected here, not an error of the page.
    const errors = collectPageErrors(page, [401, 400]);
    await signInAs(page, env.server.baseUrl, "quality", TEST_PASSWORD);

    // From the reports home, by its own name.
    await page.goto(`${env.server.baseUrl}/reports`);
    await page.getByRole("link", { name: /^Adjusted model/ }).click();
    await page.getByRole("heading", { level: 1, name: "Adjusted model" }).waitFor();
    // Opened with its defaults: casting speed examined, adjusted for grade family, heat-clustered SEs, per readable step.
    expect(await page.getByTestId("examine-pick-summary").textContent()).toBe("Casting speed");
    expect(await page.getByTestId("adjust-pick-summary").textContent()).toBe("Grade family");
    expect(await page.getByTestId("se-select").inputValue()).toBe("cluster");

    // One defect type; three more conditions to examine.
    const picker = page.getByTestId("filter-defect-type");
    await picker.locator("summary").click();
    const slg = picker.getByRole("checkbox", { name: /^SLG / });
    await slg.click();
    await expect.poll(() => slg.isChecked()).toBe(true);
    await page.getByRole("heading", { level: 1 }).click();
    const examine = page.getByTestId("examine-pick");
    await examine.locator("summary").click();
    for (const name of [/^Mold level fluctuation/, /^Superheat/, /^EMBr current/]) {
      const box = examine.getByRole("checkbox", { name });
      await box.click();
      await expect.poll(() => box.isChecked()).toBe(true);
    }
    // Grade family is taken by the adjustment: it cannot be examined too.
    expect(await examine.getByRole("checkbox", { name: /^Grade family/ }).isDisabled()).toBe(true);
    await page.getByRole("heading", { level: 1 }).click();
    // The address now says the whole question, defaults included.
    await page.waitForURL(
      (u) =>
        u.searchParams.get("variables") === "casting_speed_m_min,mold_level_sd_mm,superheat_c,embr_current_a" &&
        u.searchParams.get("defectType") === "SLG" &&
        u.searchParams.get("adjustFor") === "grade_family" &&
        u.searchParams.get("se") === "cluster" &&
        u.searchParams.get("per") === "step",
    );

    await page.getByTestId("forest-plot").locator("canvas").first().waitFor();
    const query = queryOf(page.url());
    const api = await env.server.agentFor("quality");
    const res = await api.get(`/api/reports/adjusted?${query}`);
    expect(res.status).toBe(200);
    const model = res.body as Adjusted;
    expect(model.terms.map((t) => t.variable)).toEqual(["casting_speed_m_min", "mold_level_sd_mm", "superheat_c", "embr_current_a", "grade_family"]);
    const speed = model.terms.find((t) => t.variable === "casting_speed_m_min")!;
    // The crude odds ratio of speed is far from 1; adjusted, most of it is gone.
    expect(speed.crude.oddsRatio!).toBeGreaterThan(1.2);
    expect(speed.adjusted.oddsRatio!).toBeLessThan(1.1);

    // The table is the API's, term by term.
    await expect
      .poll(() => readRows(page, "[data-testid=term-row]"))
      .toEqual(
        model.terms.map((t) => ({
          label: t.label,
          per: t.perWords,
          crudeOr: sig(t.crude.oddsRatio, 3),
          crudeCi: ratioRange(t.crude.ciLower, t.crude.ciUpper),
          crudeP: pValue(t.crude.p),
          adjustedOr: sig(t.adjusted.oddsRatio, 3),
          adjustedCi: ratioRange(t.adjusted.ciLower, t.adjusted.ciUpper),
          adjustedP: pValue(t.adjusted.p),
          change: relChange(t.changeInEstimate.relativeChange),
          vif: sig(t.vif, 3),
          ...(t.reason ? { reason: t.reason } : {}),
        })),
      );
    expect(await page.getByTestId("model-slabs").textContent()).toBe(model.slabs.toLocaleString("en-GB"));
    expect(await page.getByTestId("model-affected").textContent()).toBe(model.affected.toLocaleString("en-GB"));
    expect(await page.getByTestId("model-heats").textContent()).toBe(model.heats.toLocaleString("en-GB"));
    expect(await page.getByTestId("model-se").textContent()).toBe("Heat-clustered");
    const sentences = model.terms.filter((t) => t.role === "examined" && t.changeInEstimate.sentence).map((t) => t.changeInEstimate.sentence!);
    expect(sentences.length).toBeGreaterThan(0);
    expect(await page.getByTestId("change-sentences").getByTestId("change-sentence").allTextContents()).toEqual(
      sentences.map((s) => `Crude and adjusted differ: ${s}`),
    );
    // Collinearity the API calls notable carries its word and shape.
    const notable = model.variables.filter((v) => v.collinearity === "notable" || v.collinearity === "serious");
    expect(
      await page.locator("[data-testid=variables-table] [data-collinearity=notable], [data-testid=variables-table] [data-collinearity=serious]").count(),
    ).toBe(notable.length);
    await snap(page, "report-adjusted-desktop");

    // The workbook holds the same odds ratios as numbers.
    const [download] = await Promise.all([page.waitForEvent("download"), page.getByTestId("export-excel").click()]);
    expect(download.suggestedFilename()).toMatch(/^strandsight-adjusted-\d{4}-\d{2}-\d{2}\.xlsx$/);
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.readFile(await download.path());
    const sheet = wb.getWorksheet("Odds ratios")!;
    const header = (sheet.getRow(1).values as unknown[]).slice(1);
    const col = (name: string) => header.indexOf(name) + 1;
    expect(Array.from({ length: model.terms.length }, (_, i) => sheet.getRow(i + 2).getCell(col("Adjusted odds ratio")).value)).toEqual(
      model.terms.map((t) => t.adjusted.oddsRatio),
    );

    // Saved, listed on the reports home under its own name.
    await page.getByRole("button", { name: "Save this report" }).click();
    const name = "Slag spots, four conditions adjusted for the family (browser test)";
    await page.getByLabel("Name of the saved report").fill(name);
    await page.getByRole("button", { name: "Save", exact: true }).click();
    await page.getByTestId("report-saved").waitFor();
    const stored = env.server.db.$client.prepare("select report_kind, query from saved_reports where name = ?").get(name) as {
      report_kind: string;
      query: string;
    };
    expect(stored).toEqual({ report_kind: "adjusted", query });

    // Model-based SEs on request: said in words.
    await page.getByTestId("se-select").selectOption("model");
    await page.waitForURL((u) => u.searchParams.get("se") === "model");
    await expect.poll(() => page.getByTestId("model-se").textContent()).toBe("Model-based");
    expect(await page.getByTestId("se-words").textContent()).toContain("every slab taken as independent");

    // A derived value beside its raw input: refused, in the API's own words.
    const refusedQuery = "defectType=SLG&variables=casting_speed_m_min,throughput_t_min&adjustFor=grade_family&se=cluster&per=step";
    const refused = await api.get(`/api/reports/adjusted?${refusedQuery}`);
    expect(refused.status).toBe(400);
    const message = (refused.body as { error: { details: { message: string }[] } }).error.details[0]!.message;
    await page.goto(`${env.server.baseUrl}/reports/adjusted?${refusedQuery}`);
    await page.getByTestId("report-refused").waitFor();
    expect(await page.getByTestId("report-refused").textContent()).toContain(message);
    expect(message).toMatch(/Throughput is computed from casting speed/);

    // Tablet: the same screen with the four conditions, model-based.
    await page.setViewportSize(TABLET);
    await page.goto(`${env.server.baseUrl}/reports/adjusted?${query}`);
    await page.getByTestId("forest-plot").locator("canvas").first().waitFor();
    await snap(page, "report-adjusted-tablet");

    await page.goto(`${env.server.baseUrl}/reports`);
    const row = page.getByTestId("saved-report-row").filter({ hasText: name });
    expect(await row.locator("[data-field=kind]").textContent()).toBe("Adjusted model");

    expect(errors).toEqual([]);
    await context.close();
  });

  it("when the engineer sets a baseline on the control chart, then the phases, limits and signals on screen are the API's, the Laney and u-charts follow, and overdispersion is said in words", async () => {
    const context = await env.browser.newContext({ viewport: DESKTOP });
    const page = await context.newPage();
    page.setDefaultTimeout(15_000);
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "quality", TEST_PASSWORD);
    await page.goto(`${env.server.baseUrl}/reports/control-chart?defectType=SLG&period=day`);
    await page.getByTestId("p-chart").locator("canvas").first().waitFor();

    // Baseline: the first four weeks of the plant, typed then applied together.
    await page.getByTestId("baseline-from").fill("2027-01-04");
    await page.getByTestId("baseline-to").fill("2027-01-31");
    await page.getByTestId("baseline-apply").click();
    await page.waitForURL((u) => u.searchParams.get("baselineFrom") === "2027-01-04" && u.searchParams.get("baselineTo") === "2027-01-31");
    await page.getByTestId("baseline-words").waitFor();

    const api = await env.server.agentFor("quality");
    const check = async () => {
      const q = queryOf(page.url());
      const chart = (await api.get(`/api/reports/control-chart?${q}`)).body as ControlChart;
      const text = (v: number | null) => (chart.chart === "u" ? num(v, 3) : pct(v));
      const want = Object.fromEntries(chart.points.map((p) => [p.period, { phase: p.phase, value: text(p.value), lcl: text(p.lcl), ucl: text(p.ucl) }]));
      await expect
        .poll(async () =>
          Object.fromEntries(
            (await readRows(page, "[data-testid=pchart-row]")).map((r) => [r.period, { phase: r.phase, value: r.value, lcl: r.lcl, ucl: r.ucl }]),
          ),
        )
        .toEqual(want);
      expect(await page.getByTestId("out-count").textContent()).toBe(String(chart.points.filter((p) => p.outOfControl).length));
      expect(await page.getByTestId("rule-count").textContent()).toBe(String(chart.points.filter((p) => p.signals.some((s) => s !== 1)).length));
      expect(await page.locator("[data-testid=pchart-row] [data-rule]").count()).toBe(
        chart.points.flatMap((p) => p.signals.filter((s) => s !== 1 || !p.outOfControl)).length,
      );
      expect(await page.getByTestId("centre").textContent()).toBe(text(chart.centre));
      return chart;
    };

    const p = await check();
    expect(p.chart).toBe("p");
    expect(p.baseline).toMatchObject({ from: "2027-01-04", to: "2027-01-31" });
    expect(new Set(p.points.map((x) => x.phase))).toEqual(new Set(["baseline", "monitoring"]));
    expect(p.points.some((x) => x.signals.length > 0)).toBe(true);
    // The rules' legend is the API's.
    expect(await page.getByTestId("rules-legend").locator("li").allTextContents()).toEqual(
      Object.entries(p.rules.legend).map(([k, v]) => `${k === "1" ? "above UCL" : `rule ${k}`}Rule ${k}: ${v}`),
    );
    // Overdispersion, when the API finds it, is said in its words.
    if (p.overdispersion) expect(await page.getByTestId("overdispersion").textContent()).toContain(p.overdispersion.note);
    await snap(page, "report-control-chart-baseline-desktop");

    // Laney p′, then the u-chart (defects per slab).
    await page.getByTestId("chart-select").selectOption("laney");
    await page.waitForURL((u) => u.searchParams.get("chart") === "laney");
    const laney = await check();
    expect(laney.chart).toBe("laney");
    await page.getByTestId("standardise-select").selectOption("grade_family");
    await page.waitForURL((u) => u.searchParams.get("standardise") === "grade_family");
    await page.getByTestId("standardisation").waitFor();
    await snap(page, "report-control-chart-laney-desktop");
    await page.setViewportSize(TABLET);
    await page.reload();
    await page.getByTestId("p-chart").locator("canvas").first().waitFor();
    await page.waitForLoadState("networkidle");
    await snap(page, "report-control-chart-laney-tablet");
    await page.setViewportSize(DESKTOP);

    await page.getByTestId("chart-select").selectOption("u");
    await page.waitForURL((u) => u.searchParams.get("chart") === "u" && !u.searchParams.has("standardise"));
    const u = await check();
    expect(u.chart).toBe("u");
    expect(u.overdispersion).toBeNull();
    await snap(page, "report-control-chart-u-desktop");

    expect(errors).toEqual([]);
    await context.close();
  });

  it("when the engineer opens screening, before and after within grade family, and the overview standardised to the grade mix, then each shows the API's adjusted numbers at tablet and desktop size", async () => {
    const api = await env.server.agentFor("quality");
    for (const [size, viewport] of [
      ["desktop", DESKTOP],
      ["tablet", TABLET],
    ] as const) {
      const context = await env.browser.newContext({ viewport });
      const page = await context.newPage();
      page.setDefaultTimeout(15_000);
      const errors = collectPageErrors(page);
      await signInAs(page, env.server.baseUrl, "quality", TEST_PASSWORD);

      // Screening: ranked by the test adjusted for grade family; derived values under their raw condition, without a rank.
      await page.goto(`${env.server.baseUrl}/reports/screening?defectType=SLG`);
      await page.getByTestId("screening-table").waitFor();
      expect(await page.getByTestId("adjust-pick-summary").textContent()).toBe("Grade family");
      const scr = (await api.get(`/api/reports/screening?${queryOf(page.url())}`)).body as Screening;
      expect(scr.rankBy).toBe("adjusted");
      let rank = 0;
      await expect
        .poll(() => readRows(page, "[data-testid=screening-row]"))
        .toEqual(
          scr.variables.map((v) =>
            v.testable
              ? {
                  rank: v.parent ? "" : String(++rank),
                  label: v.label,
                  ...(v.parent ? { derived: expect.stringContaining("not counted in BH") } : {}),
                  n: v.n.toLocaleString("en-GB"),
                  iqr: expect.any(String),
                  crudeOr: sig(v.crude?.oddsRatioPerIqr, 3),
                  crudeCi: v.crude ? ratioRange(v.crude.ciLower, v.crude.ciUpper) : "",
                  p: pValue(v.p),
                  pAdjusted: pValue(v.pAdjusted),
                  adjustedOr: sig(v.adjusted?.oddsRatioPerIqr, 3),
                  adjustedCi: v.adjusted && v.adjusted.oddsRatioPerIqr !== null ? ratioRange(v.adjusted.ciLower, v.adjusted.ciUpper) : "",
                  adjustedP: pValue(v.adjusted?.p),
                  adjustedPAdjusted: pValue(v.adjusted?.pAdjusted),
                  // The grade family, the adjustment itself, says so where its adjusted figures stand.
                  ...(v.key === "grade_family" ? { adjustedWithin: "The adjustment itself: tested alone" } : {}),
                }
              : { rank: "", label: v.label, n: v.n.toLocaleString("en-GB"), reason: v.reason ?? "not testable" },
          ),
        );
      // The real cause ranks first once the family is adjusted for.
      expect(scr.variables[0]!.key).toBe("mold_level_sd_mm");
      await snap(page, `report-screening-adjusted-${size}`);

      // Before and after: slow against fast casting, compared within each grade family.
      const ba = "defectType=SLG&mode=variable&variable=casting_speed_m_min&aMin=0&aMax=1.5&bMin=1.51&bMax=3&stratifyBy=grade_family";
      await page.goto(`${env.server.baseUrl}/reports/before-after?${ba}`);
      await page.getByTestId("before-after-strata").waitFor();
      const cmp = (await api.get(`/api/reports/before-after?${queryOf(page.url())}`)).body as BeforeAfter;
      const st = cmp.stratified!;
      expect(await page.getByTestId("mh-or").textContent()).toBe(sig(st.mantelHaenszel.oddsRatio, 3));
      expect(await page.getByTestId("mh-ci").textContent()).toBe(ratioRange(st.mantelHaenszel.ciLower, st.mantelHaenszel.ciUpper));
      expect(await page.getByTestId("mh-p").textContent()).toBe(pValue(st.mantelHaenszel.p));
      expect(await page.getByTestId("crude-or").textContent()).toBe(sig(st.crude.oddsRatio, 3));
      expect(await page.getByTestId("bd-p").textContent()).toBe(`p ${pValue(st.breslowDay.p)}`);
      expect(await page.getByTestId("bd-words").textContent()).toContain(
        st.breslowDay.p! < 0.05 ? "A small p: the grade families disagree" : "a small p would mean",
      );
      expect(await readRows(page, "[data-testid=stratum-row]").then((rows) => rows.map((r) => [r.label, r.or]))).toEqual(
        st.strata.map((s) => [s.label, sig(s.oddsRatio, 3)]),
      );
      expect(await page.getByTestId("before-after-strata").getByTestId("change-sentence").textContent()).toContain(st.changeInEstimate.sentence!);
      await snap(page, `report-before-after-strata-${size}`);
      // Two periods: their days read as the filters' do (the person's language: day/month/year in English), not as the browser writes dates.
      await page.goto(`${env.server.baseUrl}/reports/before-after?defectType=SLG&mode=periods&aFrom=2026-06-01&aTo=2026-06-07&bFrom=2026-06-15&bTo=2026-06-21`);
      await expect.poll(() => page.getByTestId("range-aFrom").inputValue()).toBe("01/06/2026");
      expect(await page.getByTestId("range-bTo").inputValue()).toBe("21/06/2026");

      // Overview: each week's rate standardised to the grade mix beside the crude one.
      await page.goto(`${env.server.baseUrl}/reports/overview?defectType=SLG&period=week&standardise=grade_family`);
      await page.getByTestId("standardisation").waitFor();
      const ov = (await api.get(`/api/reports/overview?${queryOf(page.url())}`)).body as Overview;
      expect(await page.locator("[data-testid=period-row] [data-field=standardised]").allTextContents()).toEqual(
        ov.periods.map((x) => pct(x.standardised?.rate)),
      );
      await page.getByTestId("period-chart").locator("canvas").first().waitFor();
      await snap(page, `report-overview-standardised-${size}`);

      expect(errors).toEqual([]);
      await context.close();
    }
  }, 90_000);
});
