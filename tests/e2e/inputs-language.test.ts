import { describe, expect, it } from "vitest";
import type { Page } from "playwright-core";
import { collectPageErrors, signInAs, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";
import { inputDate, inputNumber, inputNumberText, parseDecimal, parseInputDate } from "../../src/lib/format";

const env = useAppAndBrowser({ scale: 0.02 });

const setLanguage = (role: string, language: string | null) =>
  env.server.db.$client.prepare("update user set language = ? where email = ?").run(language, `${role}@demo.test`);

/** A plant setting as the database holds it now. */
function storedSetting(key: string): Record<string, unknown> {
  const value = env.server.db.$client.prepare("select value from plant_settings where key = ?").pluck().get(key) as unknown;
  return (typeof value === "string" ? JSON.parse(value) : value) as Record<string, unknown>;
}

const query = (page: Page, name: string) => new URL(page.url()).searchParams.get(name);

describe("the texts an input shows and reads (src/lib/format.ts)", () => {
  it("writes a stored number with every digit it has, in the language's style, and reads it back as the same number", () => {
    const numbers = [0.75, 1e-7, -2.5e-7, 0.1 + 0.2, 714000, 1e21, 1537, 0];
    expect(numbers.map((x) => inputNumber(x, "de-DE"))).toEqual([
      "0,75",
      "0,0000001",
      "-0,00000025",
      "0,30000000000000004",
      "714000",
      "1000000000000000000000",
      "1537",
      "0",
    ]);
    expect(numbers.map((x) => inputNumber(x, "en-GB"))).toEqual([
      "0.75",
      "0.0000001",
      "-0.00000025",
      "0.30000000000000004",
      "714000",
      "1000000000000000000000",
      "1537",
      "0",
    ]);
    for (const locale of ["de-DE", "en-GB"]) for (const x of numbers) expect(parseDecimal(inputNumber(x, locale), locale)).toBe(x);
    expect([inputNumber(null), inputNumber(Number.NaN)]).toEqual(["", ""]);
    // What a person typed stays as typed; what a program wrote ("0.75", "1e-7") is rewritten.
    expect(["0.75", "1e-7", "1.50", "0,8", "abc", ""].map((t) => inputNumberText(t, "de-DE"))).toEqual(["0,75", "0,0000001", "1.50", "0,8", "abc", ""]);
  });

  it("writes a day in the language's numeric form and reads that form, ISO and (on leaving) a two-digit year; no day that does not exist", () => {
    expect([inputDate("2026-05-04", "de-DE"), inputDate("2026-05-04", "en-GB"), inputDate("", "de-DE"), inputDate("junk", "en-GB")]).toEqual([
      "04.05.2026",
      "04/05/2026",
      "",
      "",
    ]);
    expect(["04.05.2026", "4.5.2026", "2026-05-04", "31.02.2026", "29.02.2028", "04.05.20", "04.05."].map((t) => parseInputDate(t, false, "de-DE"))).toEqual([
      "2026-05-04",
      "2026-05-04",
      "2026-05-04",
      null,
      "2028-02-29",
      null,
      null,
    ]);
    expect(parseInputDate("4.5.26", true, "de-DE")).toBe("2026-05-04");
    expect(["05/06/2026", "13/01/2026", "01/13/2026"].map((t) => parseInputDate(t, false, "en-GB"))).toEqual(["2026-06-05", "2026-01-13", null]);
  });
});

describe("dates and decimal numbers typed in the person's language", () => {
  it("when a German quality engineer filters heats by date, then the field reads and writes dd.mm.yyyy and the address gets the ISO day", async () => {
    const context = await env.browser.newContext({ viewport: TABLET, locale: "en-US" });
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    try {
      setLanguage("quality", "de");
      await signInAs(page, env.server.baseUrl, "quality", TEST_PASSWORD);
      await page.goto(`${env.server.baseUrl}/heats?to=2026-03-01`);
      const from = page.getByLabel("Gegossen ab", { exact: true });
      const to = page.getByLabel("Gegossen bis (ganzer Tag)", { exact: true });
      await from.waitFor({ timeout: 30_000 });
      // A day from the address, in the German form; an empty field shows the German pattern.
      expect(await to.inputValue()).toBe("01.03.2026");
      expect(await from.getAttribute("placeholder")).toBe("TT.MM.JJJJ");
      expect(await from.getAttribute("type")).toBe("text");
      expect(await page.getByRole("button", { name: "Datum wählen" }).count()).toBe(2);

      await from.fill("04.05.2026");
      await expect.poll(() => query(page, "from"), { timeout: 15_000 }).toBe("2026-05-04");
      // ISO as typed by a test or pasted from elsewhere: read too, and written the German way on leaving.
      await to.fill("2026-05-31");
      await expect.poll(() => query(page, "to"), { timeout: 15_000 }).toBe("2026-05-31");
      await to.blur();
      expect(await to.inputValue()).toBe("31.05.2026");
      // A short form is completed on leaving.
      await to.fill("1.6.26");
      await to.blur();
      await expect.poll(() => query(page, "to"), { timeout: 15_000 }).toBe("2026-06-01");
      expect(await to.inputValue()).toBe("01.06.2026");

      // No such day: the field says so and the filter stays as it was.
      await from.fill("31.02.2026");
      await from.blur();
      expect(await from.getAttribute("aria-invalid")).toBe("true");
      await page.getByText("Geben Sie das Datum als TT.MM.JJJJ ein.").waitFor();
      await snap(page, "inputs-heat-filter-de-invalid-tablet");
      expect(query(page, "from")).toBe("2026-05-04");
      await from.fill("03.05.2026");
      await expect.poll(() => query(page, "from"), { timeout: 15_000 }).toBe("2026-05-03");
      expect(await from.getAttribute("aria-invalid")).toBeNull();
      expect(await page.getByText("Geben Sie das Datum als TT.MM.JJJJ ein.").count()).toBe(0);

      // The browser's calendar (behind the button) sets the day as well.
      await page
        .locator('input[type="date"]')
        .first()
        .evaluate((el: HTMLInputElement) => {
          Object.getOwnPropertyDescriptor(HTMLInputElement.prototype, "value")!.set!.call(el, "2026-04-20");
          el.dispatchEvent(new Event("input", { bubbles: true }));
        });
      await expect.poll(() => query(page, "from"), { timeout: 15_000 }).toBe("2026-04-20");
      expect(await from.inputValue()).toBe("20.04.2026");

      // Cleared: the filter goes.
      await from.fill("");
      await expect.poll(() => query(page, "from"), { timeout: 15_000 }).toBeNull();
      await from.fill("04.05.2026");
      await expect.poll(() => query(page, "from"), { timeout: 15_000 }).toBe("2026-05-04");
      await page.waitForLoadState("networkidle");
      await snap(page, "inputs-heat-filter-de-tablet");

      // A day left unreadable, then every filter reset: the field is emptied too, and says nothing more.
      await from.fill("31.02.2026");
      await from.blur();
      expect(await from.getAttribute("aria-invalid")).toBe("true");
      await page.getByRole("button", { name: "Filter zurücksetzen" }).click();
      await expect.poll(() => query(page, "from"), { timeout: 15_000 }).toBeNull();
      await expect.poll(() => from.inputValue()).toBe("");
      expect(await to.inputValue()).toBe("");
      expect(await from.getAttribute("aria-invalid")).toBeNull();
      expect(await page.getByText("Geben Sie das Datum als TT.MM.JJJJ ein.").count()).toBe(0);
      expect(errors).toEqual([]);
    } finally {
      setLanguage("quality", null);
      await context.close();
    }
  }, 120_000);

  it("when an English quality engineer filters heats by date, then the field is dd/mm/yyyy (day first), whatever the browser's own language", async () => {
    const context = await env.browser.newContext({ viewport: TABLET, locale: "en-US" });
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    try {
      setLanguage("quality", "en");
      await signInAs(page, env.server.baseUrl, "quality", TEST_PASSWORD);
      await page.goto(`${env.server.baseUrl}/heats?from=2026-05-04`);
      const from = page.getByLabel("Cast from", { exact: true });
      await from.waitFor({ timeout: 30_000 });
      expect(await from.inputValue()).toBe("04/05/2026");
      const to = page.getByLabel("Cast to (whole day)", { exact: true });
      expect(await to.getAttribute("placeholder")).toBe("dd/mm/yyyy");
      expect(await page.getByRole("button", { name: "Choose a date" }).count()).toBe(2);
      await to.fill("05/06/2026");
      await expect.poll(() => query(page, "to"), { timeout: 15_000 }).toBe("2026-06-05");
      await to.fill("2026/13/01");
      await to.blur();
      await page.getByText("Enter the date as dd/mm/yyyy.").waitFor();
      expect(query(page, "to")).toBe("2026-06-05");
      await snap(page, "inputs-heat-filter-en-tablet");
      expect(errors).toEqual([]);
    } finally {
      setLanguage("quality", null);
      await context.close();
    }
  }, 120_000);

  it("when a German claims handler records a claim, then the day received is written dd.mm.yyyy, checked, and stored as that day", async () => {
    const context = await env.browser.newContext({ viewport: TABLET, locale: "en-GB" });
    const page = await context.newPage();
    page.setDefaultTimeout(15_000);
    const errors = collectPageErrors(page);
    try {
      setLanguage("claims", "de");
      await signInAs(page, env.server.baseUrl, "claims", TEST_PASSWORD);
      await page.getByTestId("record-claim").click();
      await page.getByRole("heading", { level: 1, name: "Reklamation erfassen" }).waitFor();
      const received = page.getByLabel("Eingegangen am", { exact: true });
      // Today, the German way.
      const now = new Date();
      const today = [now.getDate(), now.getMonth() + 1].map((n) => String(n).padStart(2, "0")).join(".") + `.${now.getFullYear()}`;
      expect(await received.inputValue()).toBe(today);
      // Emptied: the form's own rule says so.
      await received.fill("");
      await page.getByRole("button", { name: "Reklamation erfassen" }).click();
      await page.getByText("Geben Sie das Eingangsdatum an.").waitFor();
      await received.fill("4.5.2026");
      await received.blur();
      expect(await received.inputValue()).toBe("04.05.2026");
      const claimNo = `CL-DE-${String(Date.now()).slice(-6)}`;
      await page.getByLabel("Reklamationsnummer").fill(claimNo);
      await page.getByLabel("Kunde", { exact: true }).fill("Nordkanal Rohrwerk (demo)");
      await page.getByLabel("Beanstandeter Fehler").fill("Schalenstreifen an der Bandkante");
      // German grouping: a point between thousands, the comma before the decimals.
      await page.getByLabel("Menge (t)").fill("1.024,5");
      // A day that does not exist is not sent as the day the form held before (04.05.2026): nothing is stored.
      const claimsBefore = env.server.db.$client.prepare("select count(*) from claims").pluck().get() as number;
      await received.fill("31.02.2026");
      await page.getByRole("button", { name: "Reklamation erfassen" }).click();
      await page.getByText("Geben Sie das Datum als TT.MM.JJJJ ein.").waitFor();
      expect(await received.getAttribute("aria-invalid")).toBe("true");
      expect(new URL(page.url()).pathname).toBe("/claims/new");
      expect(env.server.db.$client.prepare("select count(*) from claims").pluck().get()).toBe(claimsBefore);
      // Enter in the field: the short form is read first, and that day is what is sent.
      await received.fill("6.5.26");
      await received.press("Enter");
      await page.waitForURL(/\/claims\/\d+$/);
      const id = Number(new URL(page.url()).pathname.split("/").pop());
      const api = await env.server.agentFor("claims");
      const stored = (await api.get(`/api/claims/${id}`).expect(200)).body as { claimNo: string; receivedOn: string; quantityT: number };
      expect([stored.claimNo, stored.receivedOn, stored.quantityT]).toEqual([claimNo, "2026-05-06", 1024.5]);
      expect(errors).toEqual([]);
    } finally {
      setLanguage("claims", null);
      await context.close();
    }
  }, 120_000);

  it("when a German administrator changes the plant settings, then stored decimals show with a comma and what is saved is the same number", async () => {
    const context = await env.browser.newContext({ viewport: TABLET, locale: "en-GB" });
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    try {
      setLanguage("admin", "de");
      await signInAs(page, env.server.baseUrl, "admin", TEST_PASSWORD);
      await page.goto(`${env.server.baseUrl}/setup`);
      const form = page.getByRole("form", { name: "Anlageneinstellungen" });
      const viscosity = form.getByLabel("Viskosität μ (Pa·s)");
      const solid = form.getByLabel("Feste Bramme");
      const conductivity = form.getByLabel("Elektrische Leitfähigkeit σ (S/m)");
      await viscosity.waitFor({ timeout: 30_000 });
      await expect.poll(() => viscosity.inputValue(), { timeout: 15_000 }).toBe("0,0063");
      expect(await solid.inputValue()).toBe("7,8");
      // A number written with an exponent by the program: every digit, no grouping.
      expect(await conductivity.inputValue()).toBe("714000");
      expect(await form.getByText(/^T_L = /).textContent()).toMatch(/^T_L = 1536 − \(78 C \+ 7,6 Si \+ /);
      // The brake's calibration (a strand's own form): its line and its table of points.
      expect(await page.getByLabel("Steigung (mT pro A)").first().inputValue()).toBe("0,75");
      expect(await page.getByLabel("Feld von Punkt 2 (T)").first().inputValue()).toBe("0,15");
      await viscosity.scrollIntoViewIfNeeded();
      await snap(page, "inputs-plant-settings-de-tablet");

      // One field changed, German style; the others left as shown (one entered and left): saved as the same numbers.
      await viscosity.focus();
      await viscosity.blur();
      await solid.fill("7,9");
      await form.getByRole("button", { name: "Anlageneinstellungen speichern" }).click();
      await form.getByText("Gespeichert").waitFor({ timeout: 60_000 });
      expect(storedSetting("metallurgy.density")).toEqual({ solidTPerM3: 7.9, liquidTPerM3: 7 });
      expect(storedSetting("metallurgy.steelProperties")).toEqual({ conductivitySPerM: 714000, densityKgPerM3: 7000, viscosityPaS: 0.0063 });
      // The form takes the saved values again: still in German style.
      await expect.poll(() => solid.inputValue(), { timeout: 15_000 }).toBe("7,9");
      expect(await viscosity.inputValue()).toBe("0,0063");

      // A small number typed with a comma, and one typed with a point: both read as the number meant.
      await viscosity.fill("0,0071");
      await solid.fill("7.85");
      await form.getByRole("button", { name: "Anlageneinstellungen speichern" }).click();
      await expect.poll(() => (storedSetting("metallurgy.steelProperties") as { viscosityPaS: number }).viscosityPaS, { timeout: 60_000 }).toBe(0.0071);
      expect(storedSetting("metallurgy.density")).toEqual({ solidTPerM3: 7.85, liquidTPerM3: 7 });
      await form.getByText("Gespeichert").waitFor({ timeout: 60_000 });
      await expect.poll(() => solid.inputValue(), { timeout: 15_000 }).toBe("7,85");

      // Thrown away: the stored numbers come back, German style.
      await viscosity.fill("0,02");
      await form.getByRole("button", { name: "Änderungen verwerfen" }).click();
      await expect.poll(() => viscosity.inputValue(), { timeout: 15_000 }).toBe("0,0071");

      // The same screen in English: the stored numbers as before, with a point.
      await page.getByLabel("Sprache").selectOption("en");
      const english = page.getByRole("form", { name: "Plant settings" });
      await expect.poll(() => english.getByLabel("Viscosity μ (Pa·s)").inputValue(), { timeout: 15_000 }).toBe("0.0071");
      expect(await english.getByLabel("Solid slab").inputValue()).toBe("7.85");
      expect(await english.getByText(/^T_L = /).textContent()).toMatch(/^T_L = 1536 − \(78 C \+ 7\.6 Si \+ /);
      expect(await page.getByLabel("Slope (mT per A)").first().inputValue()).toBe("0.75");
      expect(await page.getByLabel("Field of point 2 (T)").first().inputValue()).toBe("0.15");
      expect(errors).toEqual([]);
    } finally {
      setLanguage("admin", null);
      await context.close();
    }
  }, 180_000);
});
