import type { Page } from "playwright-core";
import { describe, expect, it } from "vitest";
import { collectPageErrors, signInAs, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";

const env = useAppAndBrowser({ scale: 0.02 });

/**
 * Every text a person can read on a screen (text nodes, and the words of aria-label, title,
 * placeholder and alt), with what is the plant's own data taken out: a text equal to a value the
 * database holds (slab ids, heat numbers, grades, defect types, people, comments) is not ours to
 * translate. What remains must be pseudo-localised (⟦…⟧) or hold no word at all (numbers, units,
 * signs). A missing catalogue key would show as the key itself: that is caught too.
 */
async function untranslatedTexts(page: Page, data: Set<string>, served: Set<string>): Promise<{ ours: string[]; server: string[] }> {
  const texts = await page.evaluate(() => {
    const out: string[] = [];
    const visible = (el: Element | null) => {
      for (let e = el; e; e = e.parentElement) {
        const s = getComputedStyle(e);
        if (s.display === "none" || s.visibility === "hidden") return false;
      }
      return true;
    };
    const walker = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT);
    for (let n = walker.nextNode(); n; n = walker.nextNode()) {
      const parent = n.parentElement;
      // <code>: an identifier a person types or a file carries (a column's name), the same in every language.
      if (!parent || parent.closest("script,style,noscript,code") || !visible(parent)) continue;
      const t = (n.textContent ?? "").trim();
      if (t) out.push(t);
    }
    for (const el of document.body.querySelectorAll("[aria-label],[title],[placeholder],[alt]")) {
      if (!visible(el)) continue;
      for (const a of ["aria-label", "title", "placeholder", "alt"]) {
        const v = el.getAttribute(a)?.trim();
        if (v) out.push(v);
      }
    }
    return out;
  });
  // Names the product keeps in every language: its own, the languages' own names, units and trade
  // abbreviations, and the pseudo-locale's own name in the picker.
  const own = new Set(["Strandsight", "English", "Deutsch", "Ƥşḗḗŭŭḓǿǿ (test)"]);
  const keep = /^(Strandsight|EMBr|SEN|OR|CI|VIF|GVIF|AIC|AUC|IQR|NL\/min|m\/min|t\/min|wt|ppm|mm|min|kg|MB|kB|xlsx|csv|CSV|PDF|OpenAPI|API|ID)$/;
  const words = (s: string) => s.match(/[A-Za-z][A-Za-z'_-]{2,}/g) ?? [];
  // A date or time as Intl writes it in the locale shown ("3 Dec 2026, 10:47"): not a word of ours.
  const dates = /\b\d{1,2} (Jan|Feb|Mar|Apr|May|Jun|Jul|Aug|Sep|Oct|Nov|Dec) \d{4}(, \d{2}:\d{2})?\b/g;
  const left = (t: string) => {
    // What is left after taking out the pseudo-localised parts (nested ones too), dates, and the
    // plant's own values in it; identifiers of a file's columns (heat_no) are a format, not words.
    let rest = t;
    for (let before = ""; before !== rest;) {
      before = rest;
      rest = rest.replace(/⟦[^⟦⟧]*⟧/g, " ");
    }
    rest = rest.replace(dates, " ");
    for (const w of rest.split(/[\s·,;:()[\]/—–]+/)) if (data.has(w)) rest = rest.replace(w, " ");
    return words(rest).filter((w) => !keep.test(w) && !data.has(w) && !w.includes("_"));
  };
  const ours = new Set<string>();
  const server = new Set<string>();
  for (const t of texts) {
    if (data.has(t) || own.has(t) || left(t).length === 0) continue;
    // Written by the server in its answer (a method, a note, a level's label): listed apart.
    if (served.has(t) || [...served].some((s) => s.length >= 12 && t.includes(s))) server.add(t);
    else ours.add(t);
  }
  return { ours: [...ours], server: [...server] };
}

/** Every text value the plant's database holds: the plant's own words, names and ids. */
function plantData(): Set<string> {
  const db = env.server.db.$client;
  const out = new Set<string>();
  const tables = db
    .prepare("select name from sqlite_master where type = 'table' and name not like 'sqlite_%' and name not like '__drizzle%'")
    .pluck()
    .all() as string[];
  for (const table of tables) {
    const columns = db.prepare(`select name, type from pragma_table_info(?)`).all(table) as { name: string; type: string }[];
    for (const c of columns) {
      if (!/TEXT|^$/i.test(c.type)) continue;
      const values = db
        .prepare(`select distinct "${c.name}" from "${table}" where typeof("${c.name}") = 'text' and length("${c.name}") < 300 limit 5000`)
        .pluck()
        .all() as string[];
      for (const v of values) {
        out.add(v.trim());
        // A value written inside a sentence of ours ("Heat H24-0001") is found word by word.
        for (const w of v.split(/[\s,;:()[\]/—–]+/)) if (w.length > 2) out.add(w);
      }
    }
  }
  return out;
}

/** The main screens of each role (the role's home first), as a person of that role opens them. */
function screensOf(role: string, ids: { slabId: string; heatNo: string }): string[] {
  switch (role) {
    case "inspector":
      return ["/yard", `/yard/slabs/${ids.slabId}`];
    case "quality":
      return [
        "/quality",
        "/quality/review",
        "/quality/catalogue",
        "/reports",
        "/reports/overview",
        "/reports/rate-by-variable",
        "/reports/screening",
        "/reports/control-chart",
        "/reports/adjusted",
      ];
    case "process":
      return ["/process", "/heats", `/heats/${ids.heatNo}`, `/slabs/${ids.slabId}`, "/causes", "/investigations", "/operating-windows", "/risk-models"];
    case "claims":
      return ["/claims", "/claims/new", "/trace", `/heats/${ids.heatNo}/history`];
    case "admin":
      return ["/setup", "/admin/users", "/admin/sign-in", "/import", "/admin/tokens", "/admin/outbox"];
    default:
      throw new Error(role);
  }
}

async function setLanguage(page: Page, language: string | null) {
  await page.evaluate(async (language) => {
    await fetch("/api/me/language", { method: "PUT", headers: { "content-type": "application/json" }, body: JSON.stringify({ language }) });
  }, language);
}

/** How far the page is wider than the tablet's screen (a long word or a table pushing it sideways); 0 when it fits. */
const overflow = (page: Page) => page.evaluate(() => Math.max(0, document.documentElement.scrollWidth - window.innerWidth));

async function openScreen(page: Page, url: string) {
  await page.goto(url);
  await page.locator("header nav").first().waitFor();
  await page.waitForLoadState("networkidle");
  // A screen still drawing (a spinner's words) is waited for.
  await page.waitForFunction(() => !document.querySelector('[role="status"] .animate-spin'), undefined, { timeout: 15_000 }).catch(() => undefined);
}

function idsOf() {
  const db = env.server.db.$client;
  return {
    slabId: db.prepare("select slab_id from slabs order by id limit 1").pluck().get() as string,
    heatNo: db.prepare("select heat_no from heats order by id limit 1").pluck().get() as string,
  };
}

describe("every role's main screens in the pseudo-locale", () => {
  it.each(["inspector", "quality", "process", "claims", "admin"])(
    "when the %s opens each of their main screens in the pseudo-locale, then no text is left untranslated",
    async (role) => {
      const ids = idsOf();
      const data = plantData();
      const context = await env.browser.newContext({ viewport: TABLET });
      const page = await context.newPage();
      const errors = collectPageErrors(page);
      await signInAs(page, env.server.baseUrl, role, TEST_PASSWORD);
      await setLanguage(page, "en-XA");
      // Every text the server's answers carry (methods, notes, a level's label): what the screens show
      // of them is the server's words, listed apart from the screens' own (and checked the same way).
      const served = new Set<string>();
      page.on("response", (r) => {
        if (!r.url().includes("/api/") || !(r.headers()["content-type"] ?? "").includes("json")) return;
        r.json()
          .then((body: unknown) => {
            const walk = (v: unknown): void => {
              if (typeof v === "string") served.add(v.trim());
              else if (Array.isArray(v)) v.forEach(walk);
              else if (v && typeof v === "object") Object.values(v).forEach(walk);
            };
            walk(body);
          })
          .catch(() => undefined);
      });
      const found: Record<string, string[]> = {};
      const fromServer: Record<string, string[]> = {};
      try {
        for (const path of screensOf(role, ids)) {
          await openScreen(page, env.server.baseUrl + path);
          await page.locator("header").getByRole("button", { name: /^⟦/ }).first().waitFor();
          const { ours, server } = await untranslatedTexts(page, data, served);
          if (ours.length) found[path] = ours;
          if (server.length) fromServer[path] = server;
          if (path === screensOf(role, ids)[0]) await snap(page, `pseudo-${role}-home-tablet`);
        }
      } finally {
        await setLanguage(page, null);
      }
      // The server's own words in its answers (report methods and notes, a rule's verdict, a reason)
      // are said in the reader's language too (server/lib/words.ts): none may show in plain English.
      expect(fromServer).toEqual({});
      expect(found).toEqual({});
      expect(errors).toEqual([]);
      await context.close();
    },
    240_000,
  );
});

describe("every role's main screens in German at tablet size", () => {
  it.each(["inspector", "quality", "process", "claims", "admin"])(
    "when the %s opens each of their main screens in German on a tablet, then the page stays as wide as the screen (long words wrap) and is in German",
    async (role) => {
      const ids = idsOf();
      // Signed in as usual (the sign-in helper reads the English form), then German chosen on the account.
      const context = await env.browser.newContext({ viewport: TABLET, locale: "en-GB" });
      const page = await context.newPage();
      const errors = collectPageErrors(page);
      await signInAs(page, env.server.baseUrl, role, TEST_PASSWORD);
      await setLanguage(page, "de");
      const wide: Record<string, number> = {};
      try {
        for (const path of screensOf(role, ids)) {
          await openScreen(page, env.server.baseUrl + path);
          expect(await page.getByRole("button", { name: "Abmelden" }).count(), path).toBe(1);
          expect(await page.evaluate(() => document.documentElement.lang), path).toBe("de");
          const px = await overflow(page);
          if (px > 0) wide[path] = px;
          await snap(page, `german-${role}${path.replace(/[/:]+/g, "-").replace(/-$/, "")}-tablet`);
        }
      } finally {
        await setLanguage(page, null);
      }
      expect(wide).toEqual({});
      expect(errors).toEqual([]);
      await context.close();
    },
    240_000,
  );
});
