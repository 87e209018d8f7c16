import { describe, expect, it } from "vitest";
import { collectPageErrors, DESKTOP, signInAs, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";

/**
 * Every screen, as the role that works on it, at tablet and desktop size: it renders its heading
 * without a page error, and a screenshot is kept in tests/.artifacts/ for a person to look at.
 */
const env = useAppAndBrowser({ scale: 0.02 });

const heat = () => env.server.db.$client.prepare("select heat_no from heats order by id limit 1 offset 2").pluck().get() as string;
const slab = () =>
  env.server.db.$client.prepare("select s.slab_id from slabs s where exists (select 1 from defects d where d.slab_id = s.id) limit 1").pluck().get() as string;

const claim = () =>
  env.server.db.$client
    .prepare("select c.id from claims c where exists (select 1 from claim_slabs cs where cs.claim_id = c.id) order by c.id limit 1")
    .pluck()
    .get() as number;
const coil = () => env.server.db.$client.prepare("select product_id from products where kind = 'coil' order by id limit 1").pluck().get() as string;

const investigation = () => env.server.db.$client.prepare("select id from investigations order by id limit 1").pluck().get() as number;

const SCREENS: { role: string; name: string; path: () => string }[] = [
  { role: "inspector", name: "yard", path: () => "/yard" },
  { role: "inspector", name: "slab", path: () => `/slabs/${slab()}` },
  { role: "inspector", name: "yard-slab", path: () => `/yard/slabs/${slab()}` },
  { role: "quality", name: "quality-home", path: () => "/quality" },
  { role: "quality", name: "review", path: () => "/quality/review" },
  { role: "quality", name: "catalogue", path: () => "/quality/catalogue" },
  { role: "quality", name: "heats", path: () => "/heats" },
  { role: "quality", name: "heat", path: () => `/heats/${heat()}` },
  { role: "quality", name: "reports", path: () => "/reports" },
  { role: "quality", name: "report-overview", path: () => "/reports/overview?period=month" },
  { role: "quality", name: "report-rate-by-variable", path: () => "/reports/rate-by-variable?defectType=SLG" },
  { role: "quality", name: "report-screening", path: () => "/reports/screening?defectType=LFC" },
  {
    role: "quality",
    name: "report-adjusted",
    path: () => "/reports/adjusted?defectType=SLG&variables=casting_speed_m_min,superheat_c&adjustFor=grade_family,strand",
  },
  { role: "quality", name: "report-process-window", path: () => "/reports/process-window?defectType=SLG" },
  { role: "quality", name: "report-control-chart", path: () => "/reports/control-chart?period=week" },
  { role: "quality", name: "report-before-after", path: () => "/reports/before-after?defectType=SLG" },
  { role: "quality", name: "report-slab-positions", path: () => "/reports/slab-positions" },
  { role: "quality", name: "report-cause-pareto", path: () => "/reports/cause-pareto" },
  { role: "quality", name: "causes-read", path: () => "/causes" },
  { role: "quality", name: "slab-causes-read", path: () => `/slabs/${slab()}` },
  { role: "quality", name: "investigations-read", path: () => "/investigations?status=" },
  { role: "quality", name: "investigation-read", path: () => `/investigations/${investigation()}` },
  { role: "process", name: "process-home", path: () => "/process" },
  { role: "process", name: "import", path: () => "/import" },
  { role: "process", name: "setup", path: () => "/setup" },
  { role: "process", name: "causes", path: () => "/causes" },
  { role: "process", name: "slab-causes", path: () => `/slabs/${slab()}` },
  { role: "process", name: "heat-process", path: () => `/heats/${heat()}` },
  { role: "process", name: "report-cause-pareto-process", path: () => "/reports/cause-pareto?minConfidence=probable" },
  { role: "process", name: "investigations", path: () => "/investigations" },
  { role: "process", name: "investigation-new", path: () => `/investigations/new?heat=${heat()}` },
  { role: "process", name: "investigation", path: () => `/investigations/${investigation()}` },
  { role: "quality", name: "claims-read", path: () => "/claims" },
  { role: "quality", name: "claim-read", path: () => `/claims/${claim()}` },
  { role: "quality", name: "trace-heat", path: () => `/trace?q=${heat()}` },
  { role: "claims", name: "claims-home", path: () => "/claims" },
  { role: "claims", name: "claim-new", path: () => "/claims/new" },
  { role: "claims", name: "claim", path: () => `/claims/${claim()}` },
  { role: "claims", name: "trace-empty", path: () => "/trace" },
  { role: "claims", name: "trace-coil", path: () => `/trace?q=${coil()}` },
  { role: "claims", name: "heat-claims", path: () => `/heats/${heat()}` },
  { role: "claims", name: "heat-history", path: () => `/heats/${heat()}/history` },
  { role: "claims", name: "report-overview-claims", path: () => "/reports/overview" },
  { role: "claims", name: "investigations-claims", path: () => "/investigations" },
  { role: "admin", name: "users", path: () => "/admin/users" },
  { role: "admin", name: "tokens", path: () => "/admin/tokens" },
  { role: "admin", name: "outbox", path: () => "/admin/outbox" },
];

describe.each([
  ["tablet", TABLET],
  ["desktop", DESKTOP],
] as const)("every screen at %s size", (size, viewport) => {
  for (const role of [...new Set(SCREENS.map((s) => s.role))]) {
    it(`when ${role} opens their screens, then each renders without errors`, async () => {
      const context = await env.browser.newContext({ viewport });
      const page = await context.newPage();
      const errors = collectPageErrors(page);
      await signInAs(page, env.server.baseUrl, role, TEST_PASSWORD);
      for (const screen of SCREENS.filter((s) => s.role === role)) {
        await page.goto(env.server.baseUrl + screen.path());
        await page.getByRole("heading", { level: 1 }).first().waitFor();
        await page.waitForLoadState("networkidle");
        expect(await page.getByRole("heading", { name: /Something went wrong|Not open to your role|Not found/ }).count(), screen.name).toBe(0);
        await snap(page, `screen-${screen.name}-${size}`);
      }
      expect(errors).toEqual([]);
      await context.close();
      // A role with two dozen screens (quality) takes longer than the default 30 s on a busy machine.
    }, 90_000);
  }
});
