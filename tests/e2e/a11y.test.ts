import fs from "node:fs";
import { createRequire } from "node:module";
import type { Page } from "playwright-core";
import { describe, expect, it } from "vitest";
import type { AxeResults, ImpactValue, Result } from "axe-core";
import { collectPageErrors, DESKTOP, signInAs, TABLET, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";

/**
 * axe-core over the main screen of every role, in the real browser under the app's real Content
 * Security Policy: no serious or critical violation. The counts by impact are logged for the record.
 */
const env = useAppAndBrowser({ scale: 0.02 });

/**
 * axe's own file, read once. It goes in through page.evaluate (the DevTools protocol), which the
 * page's CSP (script-src 'self') does not govern; page.addScriptTag would add an inline <script>,
 * which that CSP refuses — the app's headers stay as they are in production.
 */
const AXE_SOURCE = fs.readFileSync(createRequire(import.meta.url).resolve("axe-core/axe.min.js"), "utf8");

const claim = () =>
  env.server.db.$client
    .prepare("select c.id from claims c where exists (select 1 from claim_slabs cs where cs.claim_id = c.id) order by c.id limit 1")
    .pluck()
    .get() as number;

/** What to run: every rule axe runs by default, and the name-against-visible-text rule (marked experimental in axe 4.x, so off unless asked). */
const AXE_OPTIONS = {
  resultTypes: ["violations"],
  rules: { "label-content-name-mismatch": { enabled: true } },
};

const FAILING: ImpactValue[] = ["serious", "critical"];

async function runAxe(page: Page): Promise<Result[]> {
  await page.evaluate(AXE_SOURCE);
  const results = await page.evaluate(
    (options) => (window as unknown as { axe: { run(ctx: Document, o: unknown): Promise<AxeResults> } }).axe.run(document, options),
    AXE_OPTIONS,
  );
  return results.violations;
}

/** One line per violation: rule, impact, how many nodes and the first few of their selectors. */
function describeViolations(violations: Result[]): string {
  return violations
    .map((v) => {
      const targets = v.nodes.map((n) => n.target.join(" ")).slice(0, 5);
      const more = v.nodes.length > targets.length ? ` … and ${v.nodes.length - targets.length} more` : "";
      return `${v.id} (${v.impact}, ${v.nodes.length} node${v.nodes.length === 1 ? "" : "s"}): ${v.help}\n    ${targets.join("\n    ")}${more}`;
    })
    .join("\n");
}

/** Nodes in violation, by impact. */
function countsByImpact(violations: Result[]): Record<NonNullable<ImpactValue>, number> {
  const counts = { critical: 0, serious: 0, moderate: 0, minor: 0 };
  for (const v of violations) counts[v.impact ?? "minor"] += v.nodes.length;
  return counts;
}

interface Screen {
  role: string | null;
  name: string;
  path: () => string;
  /** Something on the screen that shows its data have come (beyond the heading). */
  ready?: (page: Page) => Promise<unknown>;
  /** Something to open before the run, so axe sees it too (a closed <details> is out of its reach). */
  open?: (page: Page) => Promise<unknown>;
}

const SCREENS: Screen[] = [
  { role: null, name: "sign-in", path: () => "/sign-in" },
  { role: "inspector", name: "yard", path: () => "/yard" },
  { role: "quality", name: "quality-home", path: () => "/quality" },
  {
    role: "quality",
    name: "report-rate-by-variable",
    path: () => "/reports/rate-by-variable?defectType=SLG",
    ready: (page) => page.getByTestId("filter-defect-type-summary").waitFor(),
  },
  {
    role: "quality",
    name: "report-filter-picker-open",
    path: () => "/reports/rate-by-variable?defectType=SLG",
    open: async (page) => {
      await page.getByTestId("filter-grade").locator("summary").click();
      await page.getByTestId("filter-grade").getByRole("checkbox").first().waitFor();
    },
  },
  { role: "process", name: "process-home", path: () => "/process" },
  { role: "claims", name: "claims-home", path: () => "/claims" },
  { role: "claims", name: "claim", path: () => `/claims/${claim()}`, ready: (page) => page.getByTestId("claim-customer").waitFor() },
  { role: "admin", name: "users", path: () => "/admin/users", ready: (page) => page.getByTestId("user-row-admin@demo.test").waitFor() },
];

describe.each([
  ["tablet", TABLET],
  ["desktop", DESKTOP],
] as const)("accessibility at %s size", (size, viewport) => {
  for (const role of [...new Set(SCREENS.map((s) => s.role))]) {
    it(`when ${role ?? "someone signed out"} opens their main screens, then axe finds nothing serious or critical`, async () => {
      const context = await env.browser.newContext({ viewport });
      const page = await context.newPage();
      const errors = collectPageErrors(page);
      if (role) await signInAs(page, env.server.baseUrl, role, TEST_PASSWORD);
      const failures: string[] = [];
      for (const screen of SCREENS.filter((s) => s.role === role)) {
        await page.goto(env.server.baseUrl + screen.path());
        await page.getByRole("heading", { level: 1 }).first().waitFor();
        await screen.ready?.(page);
        await page.waitForLoadState("networkidle");
        await screen.open?.(page);
        // The demo plant's notice is on every screen inside the frame, in a landmark of its own (axe's "region").
        if (role) expect(await page.getByRole("complementary", { name: "Demo data" }).textContent(), screen.name).toContain("Invented demo plant");
        const violations = await runAxe(page);
        console.log(
          `axe ${size} ${screen.name}: ${JSON.stringify(countsByImpact(violations))}${violations.length ? "\n  " + describeViolations(violations).replaceAll("\n", "\n  ") : ""}`,
        );
        const bad = violations.filter((v) => FAILING.includes(v.impact ?? "minor"));
        if (bad.length) failures.push(`${screen.name} (${screen.path()}):\n  ${describeViolations(bad).replaceAll("\n", "\n  ")}`);
      }
      expect(failures.join("\n"), "serious or critical axe violations").toBe("");
      expect(errors).toEqual([]);
      await context.close();
    }, 90_000);
  }
});
