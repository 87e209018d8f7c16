import { describe, expect, it } from "vitest";
import { collectPageErrors, DESKTOP, makeJpeg, scriptBytesGzip, signInAs, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";

/**
 * The yard at tablet size, end to end: the inspector finds a slab, taps the drawing, describes the
 * defect, photographs it and saves; the entry shows in today's list with its thumbnail; the quality
 * engineer confirms it from the review queue; the inspector then sees it reviewed and read-only.
 */
const env = useAppAndBrowser({ scale: 0.02 });

interface SlabRow {
  slab_id: string;
  length_mm: number;
  width_mm: number;
  thickness_mm: number;
}

const digits = (s: string | null) => Number((s ?? "").replace(/[^\d]/g, ""));

describe("slab-yard logging at tablet size", () => {
  it("when an inspector logs a defect with a photo, then it is stored as shown, listed with its thumbnail, and after the quality engineer confirms it, it is read-only", async () => {
    const sqlite = env.server.db.$client;
    const slab = sqlite
      .prepare(
        `select s.slab_id, s.length_mm, s.width_mm, s.thickness_mm from slabs s
         where not exists (select 1 from defects d where d.slab_id = s.id) order by s.id desc limit 1`,
      )
      .get() as SlabRow;

    const context = await env.browser.newContext({ viewport: TABLET, hasTouch: true });
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "inspector", TEST_PASSWORD);
    await page.waitForURL(/\/yard$/);
    await page.getByTestId("outbox-status").waitFor();

    // Find the slab by typing in the finder, as the inspector would.
    await page.getByLabel(/Slab id or heat number/).fill(slab.slab_id);
    await page.getByRole("button", { name: new RegExp(`^${slab.slab_id}`) }).click();
    await page.waitForURL(new RegExp(`/yard/slabs/${slab.slab_id}$`));
    await page.getByRole("heading", { level: 1, name: `Slab ${slab.slab_id}` }).waitFor();
    // The hot-yard caution stays on the logging screen.
    await page.getByText("Inspect only where the site's hot-yard").waitFor();
    await snap(page, "yard-slab-empty-tablet");
    // Every control on the logging screen takes a gloved finger: at least 48 px high.
    const small = await page
      .locator("main")
      .evaluate((main) =>
        [...main.querySelectorAll("button, a, input:not([type=file]), textarea, summary, [role=radio], label:has(input[type=file])")]
          .map((el) => ({ what: (el.getAttribute("aria-label") ?? el.textContent ?? el.tagName).trim().slice(0, 40), h: el.getBoundingClientRect().height }))
          .filter((c) => c.h > 0 && c.h < 48),
      );
    expect(small).toEqual([]);

    // Tap the inner face at 40 % of the length, half-way across.
    const strip = page.locator('[data-face-strip="inner"]');
    const box = (await strip.boundingBox())!;
    await page.touchscreen.tap(box.x + box.width * 0.4, box.y + box.height * 0.5);
    await page.getByTestId("placement-mark").waitFor();
    const readout = page.getByTestId("position-readout");
    expect(await readout.textContent()).toContain("Inner (top) face");
    const along0 = digits(await page.getByTestId("readout-along").textContent());
    const across0 = digits(await page.getByTestId("readout-across").textContent());
    // One CSS pixel is about 14 mm along a 10 m slab; a tap lands within a few of them.
    expect(Math.abs(along0 - 0.4 * slab.length_mm)).toBeLessThan(60);
    expect(Math.abs(across0 - 0.5 * slab.width_mm)).toBeLessThan(30);
    // Fine-tune with the big buttons.
    await page.getByRole("button", { name: "Along, from the head end: plus 100 mm" }).click();
    await page.getByRole("button", { name: /^Across, from the left edge: minus 10 mm/ }).click();
    const along = digits(await page.getByTestId("readout-along").textContent());
    const across = digits(await page.getByTestId("readout-across").textContent());
    expect(along).toBe(along0 + 100);
    expect(across).toBe(across0 - 10);

    // Nothing can be saved without a type, a severity and a disposition; the bar says so.
    expect(await page.getByTestId("save-needs").textContent()).toContain("type, severity, disposition");

    // The type: searched in the catalogue.
    await page.getByRole("searchbox", { name: "Defect type" }).fill("slag");
    await page.getByRole("radio", { name: /SLG/ }).click();
    expect(await page.getByTestId("chosen-type").textContent()).toContain("SLG");
    await page.getByRole("radio", { name: "Major (3)" }).click();
    await page.getByLabel("Length", { exact: true }).fill("120");
    await page.getByLabel("Width", { exact: true }).fill("40");
    await page.getByRole("radio", { name: "Condition by scarfing" }).click();
    await page.getByLabel(/^Note/).fill("Near the mid-width, one spot.");
    await page.getByTestId("photo-camera").setInputFiles({ name: "defect.jpg", mimeType: "image/jpeg", buffer: await makeJpeg() });
    await page.getByTestId("picked-photo").waitFor();
    expect(await page.getByTestId("save-needs").textContent()).toContain("Ready");
    await snap(page, "yard-slab-filled-tablet");

    await page.getByRole("button", { name: "Save defect" }).click();
    await page.getByTestId("flash").waitFor();
    // Ready for the next defect: the form is empty again.
    expect(await page.getByTestId("placement-mark").count()).toBe(0);
    expect(await page.getByTestId("save-needs").textContent()).toContain("where, type, severity, disposition");
    // The entry goes up, photo and all, and shows as sent with the server's thumbnail.
    const entry = page.getByTestId("entry").first();
    await page.locator('[data-testid="entry"][data-status="sent"]').waitFor({ timeout: 15_000 });
    await entry.getByTestId("entry-thumb").waitFor();
    await snap(page, "yard-slab-saved-tablet");

    const stored = sqlite
      .prepare(
        `select d.id, d.face, d.position_along_mm, d.position_across_mm, d.length_mm, d.width_mm, d.severity, d.disposition, d.stage,
                d.note, d.review_status, d.client_key, t.code as type_code,
                (select count(*) from defect_photos p where p.defect_id = d.id and p.deleted_at is null) as photos
         from defects d join slabs s on s.id = d.slab_id join defect_types t on t.id = d.type_id
         where s.slab_id = ? and d.deleted_at is null`,
      )
      .all(slab.slab_id) as Record<string, unknown>[];
    expect(stored).toHaveLength(1);
    const row = stored[0]!;
    expect(row).toMatchObject({
      face: "inner",
      position_along_mm: along,
      position_across_mm: across,
      length_mm: 120,
      width_mm: 40,
      severity: 3,
      disposition: "scarf",
      stage: "slab_yard",
      note: "Near the mid-width, one spot.",
      review_status: "new",
      type_code: "SLG",
      photos: 1,
    });
    expect(await entry.getAttribute("data-client-key")).toBe(row.client_key);

    // Today's list on the yard screen: the entry, sent, with its thumbnail loaded from the server.
    // ("Next slab" now goes to the next piece: issue 13; the search is "Find another slab".)
    await page.getByRole("link", { name: "Find another slab", exact: true }).click();
    await page.waitForURL(/\/yard$/);
    const listed = page.locator(`[data-testid="entry"][data-defect-id="${row.id}"]`);
    await listed.waitFor();
    expect(await listed.getAttribute("data-status")).toBe("sent");
    const thumb = listed.getByTestId("entry-thumb");
    await expect.poll(() => thumb.evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth)).toBeGreaterThan(0);
    expect(await listed.getByRole("link", { name: "Change" }).count()).toBe(1);
    expect(await page.getByTestId("outbox-status").getAttribute("data-waiting")).toBe("0");
    await snap(page, "yard-today-tablet");

    // The quality engineer confirms it from the review queue.
    const qContext = await env.browser.newContext({ viewport: DESKTOP });
    const q = await qContext.newPage();
    const qErrors = collectPageErrors(q);
    await signInAs(q, env.server.baseUrl, "quality", TEST_PASSWORD);
    await q.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Review" }).click();
    await q.getByRole("heading", { level: 1, name: "Review queue" }).waitFor();
    await q.getByLabel("Only the entries of slab").fill(slab.slab_id);
    await q.getByRole("button", { name: "Show", exact: true }).click();
    const current = q.locator(`[data-testid="review-current"][data-defect-id="${row.id}"]`);
    await current.waitFor();
    await expect.poll(() => current.getByTestId("photo-thumb").evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth)).toBeGreaterThan(0);
    expect(await current.getByTestId("review-type").textContent()).toContain("SLG");
    await snap(q, "review-queue-desktop");
    await q.getByRole("button", { name: "✓ Confirm as logged" }).click();
    await q.getByTestId("review-last").waitFor();
    expect(await q.getByTestId("review-last").textContent()).toContain(`Confirmed: SLG on ${slab.slab_id}`);
    await q.getByTestId("review-empty").waitFor();
    expect(sqlite.prepare("select review_status from defects where id = ?").pluck().get(row.id)).toBe("confirmed");
    expect(qErrors).toEqual([]);
    await qContext.close();

    // Back on the tablet: reviewed, no longer editable, and it says why.
    await page.reload();
    const reviewed = page.locator(`[data-testid="entry"][data-defect-id="${row.id}"]`);
    await reviewed.waitFor();
    expect(await reviewed.getAttribute("data-status")).toBe("reviewed");
    expect(await reviewed.getByRole("link", { name: "Change" }).count()).toBe(0);
    expect(await reviewed.getByRole("button", { name: "Delete…" }).count()).toBe(0);
    expect(await reviewed.getByTestId("entry-readonly").textContent()).toContain("only a quality engineer can change it");
    await snap(page, "yard-today-reviewed-tablet");
    // The server agrees: the inspector may not change it any more.
    const inspector = await env.server.agentFor("inspector");
    const patch = await inspector.patch(`/api/defects/${row.id}`).set("Origin", env.server.baseUrl).send({ severity: 1 });
    expect(patch.status).toBe(403);

    expect(errors).toEqual([]);
    await context.close();
  }, 120_000);

  // The budget was 200 kB until the screens took their texts from catalogues through react-i18next
  // (the languages issue): i18next 16.0 kB + react-i18next 2.6 kB + the English catalogue 0.5 kB
  // gzip, measured at 199.3 → 218.4 kB; then every text of the yard's two screens moved into the
  // catalogues (yard 5.2 kB, slab 0.9 kB, the shared lists' words 0.4 kB, <Trans> for sentences
  // with a link or a mark inside 4.8 kB, the catalogue loader 1 kB; the screens' own code shrank by
  // 1.3 kB): 234.2 kB measured. Taking zod out of the first script (31 kB with the API client and
  // the shared schemas) is the way back under 200.
  it("when the inspector opens the yard and a slab's logging screen, then the scripts loaded weigh under 240 kB gzip and hold no chart library", async () => {
    const slabId = env.server.db.$client.prepare("select slab_id from slabs order by id limit 1").pluck().get() as string;
    const context = await env.browser.newContext({ viewport: TABLET });
    const signIn = await context.newPage();
    await signInAs(signIn, env.server.baseUrl, "inspector", TEST_PASSWORD);
    await signIn.close();
    // A fresh page, as the tablet opens the app already signed in: nothing from the sign-in screen.
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    await page.goto(env.server.baseUrl + "/yard");
    await page.getByLabel(/Slab id or heat number/).fill(slabId);
    await page.getByLabel(/Slab id or heat number/).press("Enter");
    await page.waitForURL(new RegExp(`/yard/slabs/${slabId}$`));
    await page.getByTestId("slab-drawing").waitFor();
    await page.waitForLoadState("networkidle");
    const scripts = await scriptBytesGzip(page);
    console.log(
      `inspector route JS (gzip): ${(scripts.total / 1024).toFixed(1)} kB in ${scripts.files.length} files\n` +
        scripts.files.map((f) => `  ${(f.gzip / 1024).toFixed(1).padStart(6)} kB ${f.url.replace(/.*\/assets\//, "")}`).join("\n"),
    );
    expect(scripts.files.length).toBeGreaterThan(3);
    expect(scripts.files.some((f) => /chart|echarts/.test(f.url))).toBe(false);
    expect(scripts.total).toBeLessThan(240 * 1024);
    expect(errors).toEqual([]);
    await context.close();
  });

  it("when the inspector changes and then deletes an own entry while it is new, then the server keeps the change, the added photo, and the deletion", async () => {
    const sqlite = env.server.db.$client;
    const slab = sqlite.prepare("select slab_id, length_mm from slabs order by id limit 1 offset 5").get() as { slab_id: string; length_mm: number };
    const agent = await env.server.agentFor("inspector");
    const created = await agent.post("/api/defects").set("Origin", env.server.baseUrl).send({
      slab_id: slab.slab_id,
      type_code: "DEP",
      face: "left",
      position_along_mm: 2000,
      position_across_mm: 100,
      severity: 2,
      disposition: "grind",
      client_key: "edit-test-0001",
      found_at: new Date().toISOString(),
    });
    expect(created.status).toBe(201);
    const id = created.body.id as number;

    const context = await env.browser.newContext({ viewport: TABLET });
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "inspector", TEST_PASSWORD);
    const row = page.locator(`[data-testid="entry"][data-defect-id="${id}"]`);
    await row.getByRole("link", { name: "Change" }).click();
    await page.waitForURL(new RegExp(`/yard/slabs/${slab.slab_id}\\?edit=${id}$`));
    await page.getByText("Changing an entry").waitFor();
    // The form holds the entry as stored.
    expect(await page.getByTestId("position-readout").textContent()).toContain("Left narrow face");
    expect(digits(await page.getByTestId("readout-along").textContent())).toBe(2000);
    expect(await page.getByRole("radio", { name: "Moderate (2)" }).getAttribute("aria-checked")).toBe("true");
    await page.getByRole("radio", { name: "Critical (4)" }).click();
    await page.getByRole("button", { name: "Along, from the head end: plus 100 mm" }).click();
    await page.getByTestId("photo-camera").setInputFiles({ name: "later.jpg", mimeType: "image/jpeg", buffer: await makeJpeg(640, 480) });
    await page.getByRole("button", { name: "Save changes" }).click();
    await page.getByTestId("flash").waitFor();
    expect(await page.getByTestId("flash").textContent()).toContain("changes saved");
    await expect
      .poll(() =>
        sqlite
          .prepare("select (select count(*) from defect_photos p where p.defect_id = d.id and p.deleted_at is null) from defects d where d.id = ?")
          .pluck()
          .get(id),
      )
      .toBe(1);
    expect(sqlite.prepare("select severity, position_along_mm, face, deleted_at from defects where id = ?").get(id)).toEqual({
      severity: 4,
      position_along_mm: 2100,
      face: "left",
      deleted_at: null,
    });
    // Changed again, the entry shows its photo: the picker offers a new one, not "no photo yet".
    await page.goto(`${env.server.baseUrl}/yard/slabs/${slab.slab_id}?edit=${id}`);
    await page.getByText("Changing an entry").waitFor();
    await expect
      .poll(() => page.getByTestId("photos-none").textContent())
      .toBe("No new photo. Photos added here are kept on the tablet and sent after the change.");

    await page.getByRole("link", { name: "Find another slab", exact: true }).click();
    await row.waitFor();
    await row.getByRole("button", { name: "Delete…" }).click();
    await row.getByRole("button", { name: "Delete this entry" }).click();
    await row.waitFor({ state: "detached" });
    expect(sqlite.prepare("select deleted_at is not null from defects where id = ?").pluck().get(id)).toBe(1);
    expect(errors).toEqual([]);
    await context.close();
  });
});
