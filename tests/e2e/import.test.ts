import { describe, expect, it } from "vitest";
import ExcelJS from "exceljs";
import { collectPageErrors, readRows, signInAs, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { openFromMenu } from "../helpers/main-menu";
import { TEST_PASSWORD } from "../helpers/test-app";

const env = useAppAndBrowser({ scale: 0.02 });

const XLSX_MIME = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet";
const HEADERS = [
  "heat_no",
  "sequence_no",
  "caster",
  "grade",
  "cast_start",
  "cast_end",
  "casting_speed_m_min",
  "tundish_temp_c",
  "embr_current_a",
  "sen_depth_mm",
  "argon_nl_min",
  "mold_level_sd_mm",
  "c_pct",
  "si_pct",
  "mn_pct",
  "p_pct",
  "s_pct",
  "al_pct",
  "n_ppm",
];
type Row = Record<string, string | number | Date>;

// Three heats of one new sequence, far from the demo plant's numbers. Chemistry of a peritectic grade.
const chem = { c_pct: 0.13, si_pct: 0.25, mn_pct: 1.2, p_pct: 0.015, s_pct: 0.005, al_pct: 0.03, n_ppm: 48 };
const goodRows = (): Row[] => [
  {
    heat_no: "T99001",
    sequence_no: "T-SEQ-1",
    caster: "CC2",
    grade: "LV-ST32",
    cast_start: new Date("2026-12-10T06:00:00Z"),
    cast_end: new Date("2026-12-10T06:40:00Z"),
    casting_speed_m_min: 1.42,
    tundish_temp_c: 1548,
    embr_current_a: 350,
    sen_depth_mm: 170,
    argon_nl_min: 7.5,
    mold_level_sd_mm: 2.1,
    ...chem,
  },
  {
    heat_no: "T99002",
    sequence_no: "T-SEQ-1",
    caster: "CC2",
    grade: "LV-ST32",
    cast_start: new Date("2026-12-10T06:40:00Z"),
    cast_end: new Date("2026-12-10T07:20:00Z"),
    casting_speed_m_min: 1.35,
    tundish_temp_c: 1546,
    embr_current_a: 350,
    sen_depth_mm: 170,
    argon_nl_min: 7.0,
    mold_level_sd_mm: 2.0,
    ...chem,
  },
  {
    heat_no: "T99003",
    sequence_no: "T-SEQ-1",
    caster: "CC2",
    grade: "LV-ST32",
    cast_start: new Date("2026-12-10T07:20:00Z"),
    cast_end: new Date("2026-12-10T08:00:00Z"),
    casting_speed_m_min: 1.4,
    tundish_temp_c: 1545,
    embr_current_a: 360,
    sen_depth_mm: 175,
    argon_nl_min: 7.2,
    mold_level_sd_mm: 1.9,
    ...chem,
  },
];

async function workbook(rows: Row[]): Promise<Buffer> {
  const wb = new ExcelJS.Workbook();
  const ws = wb.addWorksheet("heats");
  ws.addRow(HEADERS);
  for (const r of rows) ws.addRow(HEADERS.map((h) => r[h] ?? null));
  return Buffer.from(await wb.xlsx.writeBuffer());
}

describe("import screen", () => {
  it("when a process engineer imports a heats workbook with errors, fixes it and imports it, then the new heat's page shows its values", async () => {
    const context = await env.browser.newContext({ viewport: TABLET });
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "process", TEST_PASSWORD);
    await openFromMenu(page, "Import");
    await page.getByRole("heading", { level: 1, name: "Import" }).waitFor();
    // The columns are described on the screen, from the same list the server checks against.
    await page.getByTestId("import-columns").getByText("casting_speed_m_min", { exact: true }).waitFor();
    expect(await page.getByTestId("template-link").getAttribute("href")).toBe("/api/import/templates/heats.xlsx");
    await snap(page, "import-1-empty-tablet");

    // A file with two bad rows: a speed of 25 m/min on row 3, text in a numeric column on row 4.
    const bad = goodRows();
    bad[1]!.casting_speed_m_min = 25;
    bad[2]!.tundish_temp_c = "hot";
    await page
      .getByLabel(/Workbook \(\.xlsx\) or CSV file/)
      .setInputFiles({ name: "heats-with-errors.xlsx", mimeType: XLSX_MIME, buffer: await workbook(bad) });
    await page.getByTestId("import-errors").waitFor();
    const shown = await readRows(page, "[data-testid=import-error]");
    expect(shown.map((r) => [r.row, r.column])).toEqual([
      ["3", "casting_speed_m_min"],
      ["4", "tundish_temp_c"],
    ]);
    expect(shown[0]!.message).toContain("25 is outside 0.1–10 m/min");
    expect(shown[1]!.message).toContain("“hot” is not a number");
    expect(await page.getByTestId("import-error-count").textContent()).toContain("2 problems");
    // Nothing can be imported while the file has errors.
    const importButton = page.getByRole("button", { name: /^Import 3 rows$/ });
    expect(await importButton.isDisabled()).toBe(true);
    await snap(page, "import-2-errors-tablet");

    // The fixed file checks clean and would create the three heats.
    await page
      .getByLabel(/Workbook \(\.xlsx\) or CSV file/)
      .setInputFiles({ name: "heats-fixed.xlsx", mimeType: XLSX_MIME, buffer: await workbook(goodRows()) });
    await page.getByTestId("import-check").getByText("Every row is valid").waitFor();
    expect(await page.getByTestId("import-errors").count()).toBe(0);
    expect(await page.getByTestId("import-check").getByTestId("count-created").textContent()).toBe("3");
    expect(await importButton.isEnabled()).toBe(true);
    await snap(page, "import-3-checked-tablet");

    await importButton.click();
    const result = page.getByTestId("import-result");
    await result.getByText("Imported").first().waitFor();
    expect(await result.getByTestId("count-created").textContent()).toBe("3");
    expect(await result.getByTestId("count-updated").textContent()).toBe("0");
    // The run is listed among the recent imports.
    await page.getByTestId("import-run").filter({ hasText: "heats-fixed.xlsx" }).waitFor();
    await snap(page, "import-4-imported-tablet");
    // Written for real: the database holds the three heats.
    expect(env.server.db.$client.prepare("select count(*) from heats where heat_no like 'T9900%'").pluck().get()).toBe(3);

    // The new heat is found in the heats list and its page shows the imported values.
    await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Heats" }).click();
    await page.getByRole("searchbox").fill("T99001");
    await page.waitForURL(/q=T99001/);
    const rows = page.getByTestId("heat-row");
    // The previous page stays on screen while the search runs: wait for the searched one.
    await expect.poll(() => rows.allTextContents()).toEqual([expect.stringContaining("T99001")]);
    await rows.first().getByRole("link", { name: "T99001" }).click();
    await page.getByRole("heading", { level: 1, name: "Heat T99001" }).waitFor();
    expect(await page.getByTestId("heat-grade").textContent()).toContain("LV-ST32");
    expect(await page.getByTestId("heat-sequence").textContent()).toContain("T-SEQ-1 · heat 1 of 3");
    expect(await page.getByTestId("cond-speed").textContent()).toBe("1.42 m/min");
    expect(await page.getByTestId("cond-tundish").textContent()).toBe("1,548.0 °C");
    // Liquidus from the chemistry, Won & Thomas 2001 (Metall. Mater. Trans. A 32A:1755, Table I):
    // 1536 − (78·0.13 + 7.6·0.25 + 4.9·1.2 + 34.4·0.015 + 38·0.005) = 1517.374 °C; superheat 1548 − 1517.374 = 30.626 °C.
    expect(await page.getByTestId("cond-liquidus").textContent()).toBe("1,517.4 °C");
    expect(await page.getByTestId("cond-superheat").textContent()).toBe("30.6 °C");
    expect(await page.getByTestId("cond-brake").textContent()).toBe("350 A");
    expect(await page.locator("[data-element=C]").textContent()).toBe("0.1300");
    expect(await page.locator("[data-element=N]").textContent()).toBe("48");
    await snap(page, "import-5-heat-page-tablet");
    expect(errors).toEqual([]);
    await context.close();
  });
});
