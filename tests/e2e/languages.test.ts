import { describe, expect, it } from "vitest";
import { collectPageErrors, DESKTOP, roomInside, signInAs, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";

const env = useAppAndBrowser({ scale: 0.02 });

describe("the screens in the person's language (the catalogues so far: sign-in, the frame, the menu, roles)", () => {
  it("when a German browser opens the sign-in page, then it is in German", async () => {
    const context = await env.browser.newContext({ viewport: TABLET, locale: "de-DE" });
    const page = await context.newPage();
    const errors = collectPageErrors(page, []);
    await page.goto(env.server.baseUrl + "/sign-in");
    await page.getByRole("heading", { name: "Anmelden" }).waitFor();
    await expect.poll(() => page.getByLabel("Passwort").count(), { timeout: 15_000 }).toBe(1);
    await expect.poll(() => page.getByRole("link", { name: "Passwort vergessen?" }).count(), { timeout: 15_000 }).toBe(1);
    expect(await page.evaluate(() => document.documentElement.lang)).toBe("de");
    await snap(page, "languages-sign-in-de-tablet");
    expect(errors).toEqual([]);
    await context.close();
  });

  it("when the inspector picks Deutsch, then the frame and menu switch at once, the choice is kept on the account, and a new sign-in elsewhere opens in German", async () => {
    const context = await env.browser.newContext({ viewport: TABLET, locale: "en-GB" });
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "inspector", TEST_PASSWORD);
    await page.getByRole("button", { name: "Sign out" }).waitFor();
    await page.getByLabel("Language").selectOption("de");
    await page.getByRole("button", { name: "Abmelden" }).waitFor();
    const nav = page.getByRole("navigation", { name: "Hauptmenü" });
    expect(await nav.getByRole("link", { includeHidden: true }).allTextContents()).toEqual(["Brammenlager"]);
    await expect.poll(() => page.getByText("Brammenlager-Prüfer").count(), { timeout: 15_000 }).toBe(1);
    expect(env.server.db.$client.prepare("select language from user where email = 'inspector@demo.test'").pluck().get()).toBe("de");
    await page.waitForLoadState("networkidle");
    await snap(page, "languages-yard-de-tablet");
    // A screen the role may not open says so in German too, and offers no "try again" that cannot help.
    await page.goto(env.server.baseUrl + "/quality");
    await page.getByRole("heading", { name: "Für Ihre Rolle nicht freigegeben" }).waitFor();
    expect(await page.getByTestId("route-error").textContent()).toContain("Ihre Rolle öffnet diese Ansicht nicht.");
    expect(await page.getByRole("button", { name: "Erneut versuchen" }).count()).toBe(0);
    expect(errors).toEqual([]);
    await context.close();

    // Another device with an English browser: the account's choice wins once signed in.
    const other = await env.browser.newContext({ viewport: TABLET, locale: "en-US" });
    const again = await other.newPage();
    await signInAs(again, env.server.baseUrl, "inspector", TEST_PASSWORD);
    await again.getByRole("button", { name: "Abmelden" }).waitFor();
    await other.close();
    env.server.db.$client.prepare("update user set language = null where email = 'inspector@demo.test'").run();
  });

  it("when the administrator works in the pseudo-locale, then no text of the frame and menu is left in plain English", async () => {
    const context = await env.browser.newContext({ viewport: TABLET });
    const page = await context.newPage();
    await signInAs(page, env.server.baseUrl, "admin", TEST_PASSWORD);
    await page.evaluate(async () => {
      await fetch("/api/me/language", { method: "PUT", headers: { "content-type": "application/json" }, body: JSON.stringify({ language: "en-XA" }) });
    });
    await page.reload();
    const header = page.locator("header");
    await header.getByRole("button", { name: /^⟦/ }).first().waitFor();
    // Every text in the frame: the menu's links and groups, the sign-out button, the roles, the demo band.
    const texts = await page.evaluate(() => {
      const out: string[] = [];
      const roots = [document.querySelector("header"), document.querySelector('[data-testid="demo-band"]')];
      for (const root of roots) {
        if (!root) continue;
        const walker = document.createTreeWalker(root, NodeFilter.SHOW_TEXT);
        for (let n = walker.nextNode(); n; n = walker.nextNode()) {
          const t = (n.textContent ?? "").trim();
          if (t) out.push(t);
        }
      }
      return out;
    });
    // What is not ours to translate: the product's name, the person's name, and language names.
    const own = new Set(["Strandsight", "Adam Novak (demo administrator)", "English", "Deutsch", "Ƥşḗḗŭŭḓǿǿ (test)"]);
    // Brackets and separators around a translated text are not words.
    const untranslated = texts.filter((t) => /[A-Za-z]/.test(t) && !own.has(t) && !/^⟦[^⟧]*⟧$/.test(t) && !/^(⟦[^⟧]*⟧)( · ⟦[^⟧]*⟧)*$/.test(t));
    expect(untranslated).toEqual([]);
    expect(texts.length).toBeGreaterThan(8);
    await snap(page, "languages-admin-pseudo-tablet");
    await page.evaluate(async () => {
      await fetch("/api/me/language", { method: "PUT", headers: { "content-type": "application/json" }, body: JSON.stringify({ language: null }) });
    });
    await context.close();
  });

  it("when a quality engineer reading screening picks Deutsch, then the report's notes written by the server come again in German without a reload", async () => {
    const context = await env.browser.newContext({ viewport: TABLET, locale: "en-GB" });
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    try {
      await signInAs(page, env.server.baseUrl, "quality", TEST_PASSWORD);
      await page.goto(`${env.server.baseUrl}/reports/screening?defectType=SLG`);
      await page
        .getByText(/Screening shows association, not cause/)
        .first()
        .waitFor({ timeout: 60_000 });
      await page.getByLabel("Language").selectOption("de");
      await page
        .getByText(/Das Screening zeigt Zusammenhang, keine Ursache/)
        .first()
        .waitFor({ timeout: 60_000 });
      await expect.poll(() => page.getByText(/Screening shows association, not cause/).count(), { timeout: 15_000 }).toBe(0);
      // On a desktop the filters' German choices show whole (eight to a row cut "Alle Stahlsor…", "Jede, oder nicht b…").
      await page.setViewportSize(DESKTOP);
      const lists = page.getByRole("search").locator("select");
      const cut: string[] = [];
      for (let k = 0; k < (await lists.count()); k++) {
        const list = lists.nth(k);
        if ((await roomInside(list)) < 0) cut.push(await list.evaluate((el: HTMLSelectElement) => el.selectedOptions[0]?.text ?? ""));
      }
      expect(cut).toEqual([]);
      expect(errors).toEqual([]);
    } finally {
      // Whatever happened above, the quality engineer reads English again in the tests after this one.
      env.server.db.$client.prepare("update user set language = null where email = 'quality@demo.test'").run();
      await context.close();
    }
  }, 120_000);
});
