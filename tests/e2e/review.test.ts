import { describe, expect, it } from "vitest";
import { collectPageErrors, DESKTOP, signInAs, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";

/**
 * The quality engineer's side: the review queue (oldest first, each decision moves on) and the
 * defect catalogue (add, rename, recategorise, retire, reactivate), seen from the yard too.
 */
const env = useAppAndBrowser({ scale: 0.02 });
const sqlite = () => env.server.db.$client;

async function logAsInspector(slabId: string, key: string, over: Record<string, unknown> = {}) {
  const inspector = await env.server.agentFor("inspector");
  const res = await inspector
    .post("/api/defects")
    .set("Origin", env.server.baseUrl)
    .send({
      slab_id: slabId,
      type_code: "LFC",
      face: "inner",
      position_along_mm: 1000,
      position_across_mm: 300,
      severity: 2,
      disposition: "scarf",
      client_key: key,
      ...over,
    });
  expect(res.status).toBe(201);
  return res.body.id as number;
}

describe("quality review and catalogue", () => {
  // A long walk through the browser (≈ 5 s alone; it passed 30 s once beside the other browser files on two cores).
  it(
    "when the quality engineer corrects, rejects and confirms a slab's new entries, then each is stored and the queue moves on, oldest first",
    { timeout: 90_000 },
    async () => {
      const slabId = sqlite().prepare("select slab_id from slabs order by id limit 1 offset 40").pluck().get() as string;
      const first = await logAsInspector(slabId, "review-key-0001", { found_at: "2026-11-30T06:00:00Z" });
      const second = await logAsInspector(slabId, "review-key-0002", { type_code: "DEP", found_at: "2026-11-30T07:00:00Z" });
      const third = await logAsInspector(slabId, "review-key-0003", { type_code: "SLG", severity: 3, found_at: "2026-11-30T08:00:00Z" });

      const context = await env.browser.newContext({ viewport: TABLET });
      const page = await context.newPage();
      const errors = collectPageErrors(page);
      await signInAs(page, env.server.baseUrl, "quality", TEST_PASSWORD);
      // From the Quality home, which says how many wait.
      const waitingBefore = sqlite().prepare("select count(*) from defects where review_status = 'new' and deleted_at is null").pluck().get() as number;
      await expect.poll(() => page.getByTestId("quality-review-link").textContent()).toContain(`${waitingBefore} entries from the yard await review.`);
      // The queue's first answer is held back until the slab is typed: text typed while the queue
      // loads must survive its arrival (a slow tablet once lost it to a remount).
      let release = () => {};
      const held = new Promise<void>((r) => (release = r));
      await page.route(/\/api\/defects\?.*reviewStatus=new/, async (route) => {
        await held;
        await route.continue();
      });
      await page.getByTestId("quality-review-link").click();
      await page.getByText("Loading the review queue").waitFor();
      await page.getByLabel("Only the entries of slab").fill(slabId.toLowerCase());
      release();
      await page.getByTestId("review-count").waitFor();
      await page.unroute(/\/api\/defects\?.*reviewStatus=new/);
      await page.getByRole("button", { name: "Show", exact: true }).click();
      await page.getByText(`3 entries awaiting review on slab ${slabId}`).waitFor();
      const current = page.getByTestId("review-current");
      await expect.poll(() => current.getAttribute("data-defect-id")).toBe(String(first));

      // 1. Correct: another type and a higher severity.
      await page.getByRole("button", { name: "Correct type or severity…" }).click();
      const panel = page.getByTestId("correct-panel");
      await panel.getByRole("searchbox", { name: "Defect type" }).fill("corner");
      await panel.getByRole("radio", { name: /^LCC\b/ }).click();
      await panel.getByRole("radio", { name: "Major (3)" }).click();
      await snap(page, "review-correct-tablet");
      await panel.getByRole("button", { name: "Save the correction" }).click();
      await page.getByText("Corrected: LFC on").waitFor();
      // 2. The next one comes up by itself: reject it with a reason.
      await expect.poll(() => current.getAttribute("data-defect-id")).toBe(String(second));
      await page.getByRole("button", { name: "Reject…" }).click();
      const reject = page.getByRole("button", { name: "Reject the entry" });
      expect(await reject.isDisabled()).toBe(true);
      await page.getByLabel(/Why is the entry rejected/).fill("A scale mark that came off; not a defect.");
      await reject.click();
      await page.getByText("Rejected: DEP on").waitFor();
      // 3. And the last: confirm.
      await expect.poll(() => current.getAttribute("data-defect-id")).toBe(String(third));
      await page.getByRole("button", { name: "✓ Confirm as logged" }).click();
      await page.getByTestId("review-empty").waitFor();
      expect(await page.getByTestId("review-count").textContent()).toBe(`Nothing awaits review on slab ${slabId}.`);
      // Truthful: the rest of the queue is still there, and the words say how much of it.
      const others = sqlite().prepare("select count(*) from defects where review_status = 'new' and deleted_at is null").pluck().get() as number;
      expect(others).toBeGreaterThan(0);
      await expect
        .poll(() => page.getByTestId("review-empty").textContent())
        .toBe(
          `No entry of slab ${slabId} awaits review; ${others} ${others === 1 ? "entry" : "entries"} of other slabs ${others === 1 ? "waits" : "wait"} — choose "Show all slabs".`,
        );
      // The slab is kept in the address.
      expect(new URL(page.url()).searchParams.get("slab")).toBe(slabId);

      const rows = sqlite()
        .prepare(
          `select d.id, d.review_status, d.review_note, d.severity, t.code as type_code, u.email as reviewer
         from defects d join defect_types t on t.id = d.type_id left join user u on u.id = d.reviewed_by where d.id in (?, ?, ?) order by d.id`,
        )
        .all(first, second, third);
      expect(rows).toEqual([
        { id: first, review_status: "corrected", review_note: null, severity: 3, type_code: "LCC", reviewer: "quality@demo.test" },
        {
          id: second,
          review_status: "rejected",
          review_note: "A scale mark that came off; not a defect.",
          severity: 2,
          type_code: "DEP",
          reviewer: "quality@demo.test",
        },
        { id: third, review_status: "confirmed", review_note: null, severity: 3, type_code: "SLG", reviewer: "quality@demo.test" },
      ]);
      expect(errors).toEqual([]);
      await context.close();
    },
  );

  it(
    "when the queue is opened from a link with a slab and the most severe first, then it shows that slab in that order, and without a slab it pages through every entry with the total",
    { timeout: 90_000 },
    async () => {
      const slabId = sqlite().prepare("select slab_id from slabs order by id limit 1 offset 55").pluck().get() as string;
      const minor = await logAsInspector(slabId, "review-key-0101", { severity: 1, found_at: "2026-11-29T06:00:00Z" });
      const major = await logAsInspector(slabId, "review-key-0102", { type_code: "SLG", severity: 3, found_at: "2026-11-29T09:00:00Z" });
      // Enough entries elsewhere that the whole queue is longer than one page.
      const other = sqlite().prepare("select slab_id from slabs order by id limit 1 offset 56").pluck().get() as string;
      for (let k = 0; k < 30; k++)
        await logAsInspector(other, `review-key-02${String(k).padStart(2, "0")}`, { found_at: `2026-11-28T${String(k % 24).padStart(2, "0")}:00:00Z` });
      const total = sqlite().prepare("select count(*) from defects where review_status = 'new' and deleted_at is null").pluck().get() as number;
      expect(total).toBeGreaterThan(25);

      const context = await env.browser.newContext({ viewport: DESKTOP });
      const page = await context.newPage();
      const errors = collectPageErrors(page);
      await signInAs(page, env.server.baseUrl, "quality", TEST_PASSWORD);
      await page.goto(`${env.server.baseUrl}/quality/review?slab=${slabId.toLowerCase()}&sort=severity`);
      await expect
        .poll(() => page.getByTestId("review-count").textContent())
        .toBe(`2 entries awaiting review on slab ${slabId}, most severe first, then oldest.`);
      await expect.poll(() => page.getByTestId("review-current").getAttribute("data-defect-id")).toBe(String(major));
      expect(await page.getByLabel("Order").inputValue()).toBe("severity");
      expect(await page.getByLabel("Only the entries of slab").inputValue()).toBe(slabId);
      // Oldest first again: the minor one, found earlier, leads.
      await page.getByLabel("Order").selectOption("oldest");
      await expect.poll(() => page.getByTestId("review-current").getAttribute("data-defect-id")).toBe(String(minor));
      expect(new URL(page.url()).searchParams.get("sort")).toBeNull();

      // Every slab: a page of 25 with the total, and more on asking.
      await page.getByRole("button", { name: "Show all slabs" }).click();
      await expect.poll(() => page.getByTestId("review-count").textContent()).toBe(`${total} entries awaiting review, oldest first.`);
      await expect.poll(() => page.getByTestId("review-paging").textContent()).toContain(`Showing 25 of ${total}.`);
      await snap(page, "review-paging-desktop");
      await page.getByRole("button", { name: `Show ${Math.min(25, total - 25)} more` }).click();
      await expect.poll(() => page.getByTestId("review-paging").textContent()).toContain(total <= 50 ? `All ${total} shown.` : `Showing 50 of ${total}.`);
      expect(await page.getByRole("list", { name: "Entries awaiting review" }).getByRole("listitem").count()).toBe(Math.min(50, total));
      expect(errors).toEqual([]);
      await context.close();
    },
  );

  it("when the quality engineer adds, renames, recategorises and retires a type, then the yard offers it only while it is in use", async () => {
    const context = await env.browser.newContext({ viewport: DESKTOP });
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "quality", TEST_PASSWORD);
    await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Catalogue" }).click();
    await page.getByRole("heading", { level: 1, name: "Defect catalogue" }).waitFor();

    // A new category, then a new type in it.
    const newCategory = page.getByRole("form", { name: "New category" });
    await newCategory.getByLabel("Code").fill("marks");
    await newCategory.getByLabel("Name").fill("Handling marks");
    await newCategory.getByRole("button", { name: "Add category" }).click();
    await page.getByTestId("category-MARKS").waitFor();
    const newType = page.getByRole("form", { name: "New defect type" });
    await newType.getByLabel("Code").fill("rlm");
    await newType.getByLabel("Name").fill("Roller mark");
    await newType.getByLabel("Category").selectOption("MARKS");
    await newType.getByRole("button", { name: "Add type" }).click();
    const row = page.getByTestId("type-RLM");
    await row.waitFor();
    expect(sqlite().prepare("select t.name, c.code from defect_types t join defect_categories c on c.id = t.category_id where t.code = 'RLM'").get()).toEqual({
      name: "Roller mark",
      code: "MARKS",
    });

    // Rename and move it to the surface category.
    await row.getByRole("button", { name: "Edit RLM" }).click();
    await row.getByLabel("Name of RLM").fill("Roller marks");
    await row.getByLabel("Category").selectOption("SURFACE");
    await row.getByRole("button", { name: "Save" }).click();
    await page.getByTestId("type-RLM").getByText("Roller marks").waitFor();
    expect(sqlite().prepare("select t.name, c.code from defect_types t join defect_categories c on c.id = t.category_id where t.code = 'RLM'").get()).toEqual({
      name: "Roller marks",
      code: "SURFACE",
    });
    await snap(page, "catalogue-desktop");

    // The yard offers it…
    const slabId = sqlite().prepare("select slab_id from slabs order by id limit 1 offset 41").pluck().get() as string;
    const yard = await (await env.browser.newContext({ viewport: TABLET })).newPage();
    await signInAs(yard, env.server.baseUrl, "inspector", TEST_PASSWORD);
    await yard.goto(`${env.server.baseUrl}/yard/slabs/${slabId}`);
    await yard.getByRole("searchbox", { name: "Defect type" }).fill("roller");
    await expect.poll(() => yard.getByRole("radio", { name: /^RLM\b/ }).count(), { timeout: 15_000 }).toBe(1);

    // …until it is retired; its past entries stay, new ones cannot take it.
    await page.getByRole("button", { name: "Retire RLM" }).click();
    await page.getByTestId("type-RLM").locator('[data-active="false"]').waitFor();
    expect(sqlite().prepare("select active from defect_types where code = 'RLM'").pluck().get()).toBe(0);
    await yard.reload();
    await yard.getByRole("searchbox", { name: "Defect type" }).fill("roller");
    await yard.getByText("No type matches “roller”").waitFor();
    expect(await yard.getByRole("radio", { name: /^RLM\b/ }).count()).toBe(0);

    await page.getByRole("button", { name: "Reactivate RLM" }).click();
    await page.getByTestId("type-RLM").locator('[data-active="true"]').waitFor();
    expect(sqlite().prepare("select active from defect_types where code = 'RLM'").pluck().get()).toBe(1);
    expect(errors).toEqual([]);
    await context.close();
  });
});
