import { describe, expect, it } from "vitest";
import type { CausePareto } from "../../shared/api/causes";
import { collectPageErrors, DESKTOP, readRows, signInAs, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";

const env = useAppAndBrowser({ scale: 0.05 });

const TAG = "sen-clogging";

/** Live, unrejected defects of a heat that the cause Pareto counts (it joins the slab's resolved conditions). */
const heatDefectIds = (heatNo: string) =>
  env.server.db.$client
    .prepare(
      `select d.id from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id
       where h.heat_no = ? and d.deleted_at is null and d.review_status <> 'rejected'
         and exists (select 1 from slab_conditions c where c.slab_id = d.slab_id) order by d.id`,
    )
    .pluck()
    .all(heatNo) as number[];

/** How many of these defects carry a live tagging with the tag. */
const taggedWith = (ids: number[], tag: string, confidence?: string) =>
  env.server.db.$client
    .prepare(
      `select count(distinct dc.defect_id) from defect_causes dc join cause_tags t on t.id = dc.tag_id
       where t.code = ? and dc.removed_at is null and dc.defect_id in (${ids.join(",")})${confidence ? " and dc.confidence = ?" : ""}`,
    )
    .pluck()
    .get(...(confidence ? [tag, confidence] : [tag])) as number;

const paretoRow = (p: CausePareto, code: string) => p.rows.find((r) => r.code === code)?.defects ?? 0;

/** The cause Pareto's row for a tag as the screen shows it (0 when the tag has no row). */
async function screenCount(page: import("playwright-core").Page, code: string): Promise<number> {
  const rows = await readRows(page, `[data-testid=cause-pareto-row][data-code=${code}]`);
  return rows.length ? Number(rows[0]!.defects!.replace(/,/g, "")) : 0;
}

describe("cause tagging in the browser", () => {
  it("when a process engineer tags all of a heat's defects with one cause, then the cause Pareto's count for it rises by exactly the defects not already tagged with it", async () => {
    // A heat with several defects the report counts.
    const heatNo = env.server.db.$client
      .prepare(
        `select h.heat_no from heats h join slabs s on s.heat_id = h.id join defects d on d.slab_id = s.id
         where d.deleted_at is null and d.review_status <> 'rejected' and exists (select 1 from slab_conditions c where c.slab_id = d.slab_id)
         group by h.id having count(*) >= 3 order by count(*) desc limit 1`,
      )
      .pluck()
      .get() as string;
    const ids = heatDefectIds(heatNo);
    expect(ids.length).toBeGreaterThanOrEqual(3);

    // One of its defects already carries the cause (suspected): it must not count twice.
    const api = await env.server.agentFor("process");
    const pre = await api
      .post(`/api/defects/${ids[0]}/causes`)
      .set("Origin", env.server.baseUrl)
      .send({ tags: [TAG], confidence: "suspected", note: "seen on the nozzle" });
    expect(pre.status).toBe(201);
    const notYet = ids.length - taggedWith(ids, TAG);
    expect(notYet).toBe(ids.length - 1);

    const before = (await api.get("/api/reports/cause-pareto?minConfidence=suspected")).body as CausePareto;
    expect(paretoRow(before, TAG)).toBeGreaterThanOrEqual(1);

    const context = await env.browser.newContext({ viewport: DESKTOP });
    const page = await context.newPage();
    page.setDefaultTimeout(15_000);
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "process", TEST_PASSWORD);

    // The report before: the screen's row is the API's.
    await page.goto(`${env.server.baseUrl}/reports/cause-pareto`);
    await page.getByRole("heading", { level: 1, name: "Cause Pareto" }).waitFor();
    await page.getByTestId("report-cautions").waitFor();
    await page.getByTestId("cause-pareto-table").waitFor();
    await expect.poll(() => screenCount(page, TAG)).toBe(paretoRow(before, TAG));
    expect(await page.getByTestId("cp-defects").textContent()).toBe(before.defects.toLocaleString("en-GB"));

    // The heat: tag all its defects, confirmed, after a dry run.
    await page.goto(`${env.server.baseUrl}/heats/${encodeURIComponent(heatNo)}`);
    await page.getByRole("heading", { level: 1, name: `Heat ${heatNo}` }).waitFor();
    await page.getByTestId("bulk-tag-heat").click();
    const panel = page.getByTestId("bulk-tag");
    await panel.getByRole("checkbox", { name: /SEN clogging/ }).check();
    await panel.getByRole("radio", { name: /Confirmed/ }).check();
    await panel.getByLabel("Note (optional)").fill("Nozzle found clogged at the tundish change");
    await panel.getByRole("button", { name: "Count the defects first" }).click();
    await page.getByTestId("bulk-preview").waitFor();
    expect(await page.getByTestId("bulk-preview-defects").textContent()).toBe(`${ids.length} defects`);
    // The pre-tagged defect changes confidence, so every defect gets a new or changed tagging.
    expect(await page.getByTestId("bulk-preview-tagged").textContent()).toBe(`${ids.length} new or changed taggings`);
    // Nothing written by the dry run.
    expect(taggedWith(ids, TAG)).toBe(1);
    await snap(page, "bulk-tag-preview-desktop");
    await page.getByTestId("bulk-apply").click();
    await page.getByTestId("bulk-result").waitFor();
    expect(await page.getByTestId("bulk-result-text").textContent()).toBe(`${ids.length} taggings written, 0 unchanged`);
    expect(taggedWith(ids, TAG, "confirmed")).toBe(ids.length);
    await snap(page, "bulk-tag-written-desktop");

    // The report after: up by exactly the defects that were not yet tagged with the cause.
    await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Reports" }).click();
    await page.getByRole("link", { name: /^Cause Pareto/ }).click();
    await page.getByRole("heading", { level: 1, name: "Cause Pareto" }).waitFor();
    const after = (await api.get("/api/reports/cause-pareto?minConfidence=suspected")).body as CausePareto;
    expect(paretoRow(after, TAG)).toBe(paretoRow(before, TAG) + notYet);
    await expect.poll(() => screenCount(page, TAG)).toBe(paretoRow(before, TAG) + notYet);
    const row = (await readRows(page, `[data-testid=cause-pareto-row][data-code=${TAG}]`))[0]!;
    const apiRow = after.rows.find((r) => r.code === TAG)!;
    expect(Number(row.confirmed)).toBe(apiRow.confirmed);
    expect(apiRow.confirmed).toBeGreaterThanOrEqual(ids.length);
    await page.getByTestId("cause-pareto-chart").locator("canvas").first().waitFor();

    // Only confirmed taggings: the same cause, the same number (all of the heat's are confirmed now).
    await page.getByTestId("min-confidence").selectOption("confirmed");
    await page.waitForURL((u) => u.searchParams.get("minConfidence") === "confirmed");
    const confirmedOnly = (await api.get("/api/reports/cause-pareto?minConfidence=confirmed")).body as CausePareto;
    await expect.poll(() => screenCount(page, TAG)).toBe(paretoRow(confirmedOnly, TAG));
    await snap(page, "report-cause-pareto-desktop");

    // The cause filter of the filter bar comes from the taxonomy and narrows to the tagged defects.
    await page.getByTestId("filter-cause").selectOption(TAG);
    await page.waitForURL((u) => u.searchParams.get("cause") === TAG);
    const narrowed = (await api.get(`/api/reports/cause-pareto?cause=${TAG}&minConfidence=confirmed`)).body as CausePareto;
    await expect.poll(async () => page.getByTestId("cp-defects").textContent()).toBe(narrowed.defects.toLocaleString("en-GB"));
    expect(narrowed.defects).toBe(paretoRow(after, TAG));

    expect(errors).toEqual([]);
    await context.close();
  });

  it("when a quality engineer opens a slab with a tagged defect, then its causes and history show without any control to change them", async () => {
    const api = await env.server.agentFor("process");
    const defect = env.server.db.$client
      .prepare(
        `select d.id, s.slab_id as slabId from defects d join slabs s on s.id = d.slab_id
         where d.deleted_at is null and d.review_status <> 'rejected'
           and not exists (select 1 from defect_causes dc where dc.defect_id = d.id) order by d.id limit 1`,
      )
      .get() as { id: number; slabId: string };
    // Tagged twice, the first tagging then removed: the history holds both.
    const first = await api
      .post(`/api/defects/${defect.id}/causes`)
      .set("Origin", env.server.baseUrl)
      .send({ tags: ["mold-powder"], confidence: "suspected" });
    expect(first.status).toBe(201);
    const linkId = first.body.current[0].id as number;
    expect(
      (await api.delete(`/api/defects/${defect.id}/causes/${linkId}`).set("Origin", env.server.baseUrl).send({ reason: "powder was to specification" })).status,
    ).toBe(200);
    expect(
      (
        await api
          .post(`/api/defects/${defect.id}/causes`)
          .set("Origin", env.server.baseUrl)
          .send({ tags: ["high-superheat"], confidence: "probable" })
      ).status,
    ).toBe(201);

    for (const [size, viewport] of [
      ["tablet", TABLET],
      ["desktop", DESKTOP],
    ] as const) {
      const context = await env.browser.newContext({ viewport });
      const page = await context.newPage();
      page.setDefaultTimeout(15_000);
      const errors = collectPageErrors(page);
      await signInAs(page, env.server.baseUrl, "quality", TEST_PASSWORD);
      await page.goto(`${env.server.baseUrl}/slabs/${encodeURIComponent(defect.slabId)}`);
      await page.getByRole("heading", { level: 1, name: `Slab ${defect.slabId}` }).waitFor();
      const chip = page.locator("[data-testid=cause-chip][data-tag=high-superheat]");
      await chip.waitFor();
      expect(await chip.textContent()).toBe("High superheat· probable");
      expect(await page.locator("[data-testid=cause-chip][data-tag=mold-powder]").count()).toBe(0);
      // Read only: nothing to add or remove.
      expect(await page.getByTestId("edit-causes").count()).toBe(0);
      expect(await page.getByRole("button", { name: /Remove/ }).count()).toBe(0);
      expect(await page.getByTestId("open-investigation-defect").count()).toBe(0);
      // The history: both taggings, the removed one with who removed it.
      const card = page.getByTestId("slab-defect").filter({ has: chip });
      await card.getByTestId("cause-history-toggle").click();
      const items = card.getByTestId("cause-history-item");
      await expect.poll(() => items.count()).toBe(2);
      const removed = card.locator("[data-testid=cause-history-item][data-removed=true]");
      expect(await removed.textContent()).toContain("Mold powder behaviour");
      expect(await removed.textContent()).toContain("Removed by Priya Raman (demo process engineer)");
      await snap(page, `slab-causes-quality-${size}`);
      expect(errors).toEqual([]);
      await context.close();
    }
  });
});

describe("tagging one defect on its slab", () => {
  it("when a process engineer adds a cause to one defect, then the editor closes, the chip shows and one line says it was added", async () => {
    const defect = env.server.db.$client
      .prepare(
        `select d.id, s.slab_id as slabId from defects d join slabs s on s.id = d.slab_id
         where d.deleted_at is null and d.review_status <> 'rejected'
           and not exists (select 1 from defect_causes dc where dc.defect_id = d.id) order by d.id desc limit 1`,
      )
      .get() as { id: number; slabId: string };
    const context = await env.browser.newContext({ viewport: TABLET });
    const page = await context.newPage();
    page.setDefaultTimeout(15_000);
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "process", TEST_PASSWORD);
    await page.goto(`${env.server.baseUrl}/slabs/${encodeURIComponent(defect.slabId)}`);
    await page.getByRole("heading", { level: 1, name: `Slab ${defect.slabId}` }).waitFor();
    const card = page.locator(`[data-testid=slab-defect][data-defect-id="${defect.id}"]`);
    await card.getByTestId("edit-causes").click();
    await card
      .getByTestId("cause-editor")
      .getByRole("checkbox", { name: /^High superheat/ })
      .check();
    await card.getByRole("button", { name: "Add these causes" }).click();
    await card.getByTestId("causes-added").waitFor();
    expect(await card.getByTestId("causes-added").textContent()).toBe("✓ Cause added.");
    expect(await card.getByTestId("cause-editor").count()).toBe(0);
    await card.locator("[data-testid=cause-chip][data-tag=high-superheat]").waitFor();
    expect(taggedWith([defect.id], "high-superheat")).toBe(1);
    // Opening the editor again starts clean: no word left over from the last tagging.
    await card.getByTestId("edit-causes").click();
    expect(await card.getByTestId("causes-added").count()).toBe(0);
    await snap(page, "slab-cause-added-tablet");
    expect(errors).toEqual([]);
    await context.close();
  });
  it("when a process engineer works the list of defects without a cause, then one tagged in place leaves it and the editor moves to the next, and two selected are tagged at once", async () => {
    const untagged = (extra = "", ...a: unknown[]) =>
      env.server.db.$client
        .prepare(
          `select count(*) from defects d join defect_types t on t.id = d.type_id where d.deleted_at is null and d.review_status <> 'rejected'
           and not exists (select 1 from defect_causes dc where dc.defect_id = d.id and dc.removed_at is null)${extra}`,
        )
        .pluck()
        .get(...a) as number;
    const type = env.server.db.$client
      .prepare(
        `select t.code from defects d join defect_types t on t.id = d.type_id where d.deleted_at is null and d.review_status <> 'rejected'
         and not exists (select 1 from defect_causes dc where dc.defect_id = d.id and dc.removed_at is null) group by t.id having count(*) >= 5 order by count(*) desc limit 1`,
      )
      .pluck()
      .get() as string;
    const before = untagged(" and t.code = ?", type);
    const context = await env.browser.newContext({ viewport: TABLET });
    const page = await context.newPage();
    page.setDefaultTimeout(15_000);
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "process", TEST_PASSWORD);
    // From the process home: its count and its link.
    await page.goto(`${env.server.baseUrl}/process`);
    await page
      .getByTestId("process-untagged")
      .getByText(`${untagged().toLocaleString("en-GB")} defect`)
      .waitFor();
    await page.getByRole("link", { name: "Tag defects without a cause" }).click();
    await page.getByRole("heading", { level: 1, name: "Defects without a cause" }).waitFor();
    await page.getByTestId("worklist-type").selectOption(type);
    await page.waitForURL(new RegExp(`type=${type}`));
    await page
      .getByTestId("worklist-count")
      .getByText(`${before.toLocaleString("en-GB")} defect`)
      .waitFor();
    const rows = page.getByTestId("worklist-row");
    const firstId = Number(await rows.nth(0).getAttribute("data-defect-id"));
    const secondId = Number(await rows.nth(1).getAttribute("data-defect-id"));
    // From here on the causes' own list answers 1.5 s late, so after each write the worklist comes
    // back (without the tagged defects) well before it — as a busy server once answered in a full
    // run. The editor and the bulk panel then leave the screen before the write's promise settles:
    // what was written must still be said and the editor must still move on.
    await page.route(/\/api\/cause-tags(\?|$)/, async (route) => {
      await new Promise((r) => setTimeout(r, 1_500));
      await route.continue();
    });

    // One at a time: tag the first in place; the editor opens on the next defect.
    await rows.nth(0).getByTestId("worklist-tag").click();
    const form = page.getByTestId("worklist-tag-form");
    await form.getByRole("checkbox", { name: /^High superheat/ }).check();
    await form.getByRole("button", { name: "Add the causes and go to the next" }).click();
    await page
      .getByTestId("worklist-done")
      .getByText(/Causes added to .* High superheat\./)
      .waitFor();
    await page.locator(`[data-testid=worklist-row][data-defect-id="${firstId}"]`).waitFor({ state: "detached" });
    expect(await page.getByTestId("worklist-tag-form").count()).toBe(1);
    expect(await page.getByTestId("worklist-tag-form").textContent()).toContain("Causes of");
    await page
      .getByTestId("worklist-count")
      .getByText(`${(before - 1).toLocaleString("en-GB")} defect`)
      .waitFor();
    expect(taggedWith([firstId], "high-superheat")).toBe(1);
    await snap(page, "worklist-next-tablet");
    await page.getByTestId("worklist-tag-form").getByRole("button", { name: "Cancel" }).click();

    // In bulk: the next two selected, counted first, then written.
    const a = Number(await rows.nth(0).getAttribute("data-defect-id"));
    const b = Number(await rows.nth(1).getAttribute("data-defect-id"));
    expect(a).toBe(secondId);
    await rows.nth(0).getByRole("checkbox").check();
    await rows.nth(1).getByRole("checkbox").check();
    await page.getByTestId("worklist-selection").getByText("2 defects selected").waitFor();
    await page.getByTestId("worklist-bulk-open").click();
    const bulk = page.getByTestId("bulk-tag");
    await bulk.getByRole("checkbox", { name: /^Ladle change/ }).check();
    await bulk.getByRole("button", { name: "Count the defects first" }).click();
    expect(await page.getByTestId("bulk-preview-defects").textContent()).toBe("2 defects");
    // The count is read against what it counts: the causes and the confidence asked.
    expect(await page.getByTestId("bulk-preview-causes").textContent()).toBe("Cause: Ladle change, suspected");
    await page.getByTestId("bulk-apply").click();
    await page.getByTestId("worklist-done").getByText("Ladle change: 2 taggings written over 2 defects; they leave this list.").waitFor();
    await page
      .getByTestId("worklist-count")
      .getByText(`${(before - 3).toLocaleString("en-GB")} defect`)
      .waitFor();
    expect(taggedWith([a, b], "ladle-change")).toBe(2);
    expect(untagged(" and t.code = ?", type)).toBe(before - 3);
    await snap(page, "worklist-bulk-tablet");
    await page.setViewportSize(DESKTOP);
    await snap(page, "worklist-desktop");
    expect(errors).toEqual([]);
    await context.close();
  });
});
