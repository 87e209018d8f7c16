import { describe, expect, it } from "vitest";
import type { BrowserContext, Page } from "playwright-core";
import { apartFromOffline, collectPageErrors, DESKTOP, makeJpeg, signInAs, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";

/**
 * The yard's slabs on the tablet (issue 13): the set is synced into IndexedDB while online; without
 * a network — after a cold reload, with the service worker serving the app — the yard finds a slab
 * never opened before, logs it with a photo, and the entry is stored once when the network returns.
 * An id outside the set is logged by id and comes back to be fixed; "Next slab"; a rolled slab asks
 * first. The network is cut by Chromium itself (`context.setOffline`); nothing of ours is stubbed.
 */
const env = useAppAndBrowser({ scale: 0.02 });
const SLOW = 150_000;
const sqlite = () => env.server.db.$client;

interface SlabRow {
  slab_id: string;
  heat_no: string;
  strand_no: number;
  piece_no: number;
  length_mm: number;
  width_mm: number;
  thickness_mm: number;
  grade: string;
  cast_at: number;
}
const SLAB = `select s.slab_id, h.heat_no, st.strand_no, s.piece_no, s.length_mm, s.width_mm, s.thickness_mm, g.code as grade, s.cast_at
  from slabs s join heats h on h.id = s.heat_id join strands st on st.id = s.strand_id join grades g on g.id = h.grade_id`;
const UNINSPECTED = `not exists (select 1 from defects d where d.slab_id = s.id and d.deleted_at is null) and not exists (select 1 from products p where p.slab_id = s.id)`;
/** Slabs this file has used already, so each test meets slabs never opened before. */
const used = new Set<string>();
function pick(where: string, ...args: unknown[]): SlabRow {
  const rows = sqlite()
    .prepare(`${SLAB} where ${where} order by s.cast_at desc`)
    .all(...args) as SlabRow[];
  const row = rows.find((r) => !used.has(r.slab_id));
  if (!row) throw new Error(`no slab for ${where}`);
  used.add(row.slab_id);
  return row;
}

function storedByKey(clientKey: string) {
  return sqlite()
    .prepare(
      `select d.id, s.slab_id, d.stage, d.severity, t.code as type_code,
              (select count(*) from defect_photos p where p.defect_id = d.id and p.deleted_at is null) as photos
       from defects d join defect_types t on t.id = d.type_id join slabs s on s.id = d.slab_id where d.client_key = ?`,
    )
    .all(clientKey) as { id: number; slab_id: string; stage: string; severity: number; type_code: string; photos: number }[];
}

function countPosts(page: Page) {
  const counts = { defects: 0, photos: 0, sync: 0, sync304: 0 };
  page.on("request", (r) => {
    const path = new URL(r.url()).pathname;
    if (r.method() === "POST" && path === "/api/defects") counts.defects++;
    if (r.method() === "POST" && /^\/api\/defects\/\d+\/photos$/.test(path)) counts.photos++;
  });
  page.on("response", (r) => {
    if (new URL(r.url()).pathname !== "/api/yard/sync") return;
    counts.sync++;
    if (r.status() === 304) counts.sync304++;
  });
  return counts;
}

/** Signed in on a tablet, the yard open and its set synced; the service worker controls the page. */
async function tabletWithSet(): Promise<{ context: BrowserContext; page: Page; errors: string[] }> {
  const context = await env.browser.newContext({ viewport: TABLET });
  const page = await context.newPage();
  const errors = collectPageErrors(page);
  await signInAs(page, env.server.baseUrl, "inspector", TEST_PASSWORD);
  await page.getByRole("heading", { level: 1, name: "Find a slab" }).waitFor();
  await page.waitForFunction(() => navigator.serviceWorker?.controller?.state === "activated", null, { timeout: 60_000 });
  await expect.poll(async () => Number(await page.getByTestId("yard-sync-status").getAttribute("data-count")), { timeout: 30_000 }).toBeGreaterThan(0);
  return { context, page, errors };
}

/** What the server would hand this inspector now. */
async function serverSet() {
  const agent = await env.server.agentFor("inspector");
  return (await agent.get("/api/yard/sync")).body as { slabs: { slabId: string }[] };
}

/** A defect on the outer face, as the inspector logs it; returns the entry's client key. */
async function logDefect(page: Page, opts: { type: string; severity: string; photo: boolean; stage?: string }) {
  const strip = page.locator('[data-face-strip="outer"]');
  const box = (await strip.boundingBox())!;
  await strip.click({ position: { x: box.width * 0.3, y: box.height * 0.5 } });
  await page.getByTestId("placement-mark").waitFor();
  await page.getByRole("searchbox", { name: "Defect type" }).fill(opts.type);
  await page.getByRole("radio", { name: new RegExp(`^${opts.type}\\b`) }).click();
  await page.getByRole("radio", { name: opts.severity }).click();
  if (opts.stage) await page.getByRole("radio", { name: opts.stage, exact: true }).click();
  await page.getByRole("radio", { name: "Hold for decision" }).click();
  if (opts.photo) {
    await page.getByTestId("photo-camera").setInputFiles({ name: "yard.jpg", mimeType: "image/jpeg", buffer: await makeJpeg(1024, 768) });
    await page.getByTestId("picked-photo").waitFor();
  }
  await page.getByRole("button", { name: "Save defect" }).click();
}

async function saved(page: Page): Promise<string> {
  await page.getByTestId("flash").waitFor();
  return (await page.locator('[data-testid="entry"]').first().getAttribute("data-client-key"))!;
}

describe("the yard's slabs on the tablet", () => {
  it(
    "when the tablet was online once, then after a cold reload offline a synced slab never opened before is logged with a photo, and stored once with it when the network returns",
    async () => {
      const slab = pick(`s.piece_no >= 2 and ${UNINSPECTED} and s.cast_at >= ?`, Date.now() - 24 * 3_600_000);
      const { context, page, errors } = await tabletWithSet();
      const posts = countPosts(page);
      const expected = (await serverSet()).slabs.length;
      const status = page.getByTestId("yard-sync-status");
      expect(Number(await status.getAttribute("data-count"))).toBe(expected);
      expect(await status.textContent()).toMatch(new RegExp(`Slabs on this tablet: ${expected.toLocaleString("en-GB")}, synced \\d\\d:\\d\\d`));
      await snap(page, "yard-sync-online-tablet");

      // Asked again with the tag it holds, the server answers 304.
      await page.getByRole("button", { name: "Update now" }).click();
      await expect.poll(() => posts.sync304).toBeGreaterThan(0);

      await context.setOffline(true);
      await page.reload();
      await page.getByRole("heading", { level: 1, name: "Find a slab" }).waitFor();
      // Read back from IndexedDB, not from the network.
      await expect.poll(() => status.getAttribute("data-count")).toBe(String(expected));
      expect(await status.textContent()).toContain("Offline: the slab search uses the slabs on this tablet.");

      // The finder answers from the tablet: the slab, never opened on this tablet before.
      await page.getByLabel(/Slab id or heat number/).fill(slab.slab_id.slice(0, -1));
      const hit = page.getByRole("button", { name: new RegExp(`^${slab.slab_id}`) });
      await hit.waitFor();
      expect(await hit.textContent()).toContain("not inspected yet");
      await snap(page, "yard-sync-search-offline-tablet");
      await hit.click();
      await page.waitForURL(new RegExp(`/yard/slabs/${slab.slab_id}$`));
      await page.getByRole("heading", { level: 1, name: `Slab ${slab.slab_id}` }).waitFor();
      expect(await page.locator("[data-slab-source]").getAttribute("data-slab-source")).toBe("tablet");
      const subtitle = `Heat ${slab.heat_no} · ${slab.grade} · strand ${slab.strand_no}, piece ${slab.piece_no} · 230 × ${slab.width_mm.toLocaleString("en-GB")} × ${slab.length_mm.toLocaleString("en-GB")} mm`;
      await page.getByText(subtitle).waitFor();
      await page.getByTestId("slab-drawing").waitFor();

      await logDefect(page, { type: "SLG", severity: "Major (3)", photo: true });
      const clientKey = await saved(page);
      const entry = page.locator(`[data-testid="entry"][data-client-key="${clientKey}"]`);
      expect(await entry.getAttribute("data-status")).toBe("waiting");
      await snap(page, "yard-sync-slab-offline-tablet");
      // The tablet turned sideways: the same screen fits its width, nothing scrolls sideways.
      await page.setViewportSize({ width: TABLET.height, height: TABLET.width });
      await page.getByTestId("slab-drawing").waitFor();
      expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(TABLET.height);
      await snap(page, "yard-sync-slab-offline-landscape");
      await page.setViewportSize(TABLET);
      expect(storedByKey(clientKey)).toEqual([]);
      expect(posts.defects).toBe(0);

      await context.setOffline(false);
      await page.locator(`[data-testid="entry"][data-client-key="${clientKey}"][data-status="sent"]`).waitFor({ timeout: 30_000 });
      const stored = storedByKey(clientKey);
      expect(stored).toHaveLength(1);
      expect(stored[0]).toMatchObject({ slab_id: slab.slab_id, type_code: "SLG", severity: 3, stage: "slab_yard", photos: 1 });
      expect(posts).toMatchObject({ defects: 1, photos: 1 });
      // The photo is on disk and readable through the API.
      const photo = sqlite().prepare("select id, width, height from defect_photos where defect_id = ?").get(stored[0]!.id) as {
        id: string;
        width: number;
        height: number;
      };
      expect(photo.width).toBeGreaterThan(0);
      const inspector = await env.server.agentFor("inspector");
      const got = await inspector.get(`/api/photos/${photo.id}`);
      expect(got.status).toBe(200);
      expect(got.headers["content-type"]).toMatch(/^image\//);
      await page.setViewportSize(DESKTOP);
      await snap(page, "yard-sync-slab-sent-desktop");
      await page.getByRole("link", { name: "Find another slab", exact: true }).click();
      await page.getByTestId("yard-sync-status").waitFor();
      await snap(page, "yard-sync-yard-desktop");
      expect(apartFromOffline(errors)).toEqual([]);
      await context.close();
    },
    SLOW,
  );

  it(
    "when a slab id outside the set is logged offline and the server does not know it, then the entry comes back to be fixed, is fixed, and is stored once on the right slab",
    async () => {
      const right = pick(`s.piece_no >= 2 and ${UNINSPECTED} and s.cast_at >= ?`, Date.now() - 24 * 3_600_000);
      const wrongId = "L269999-199";
      const { context, page, errors } = await tabletWithSet();
      const posts = countPosts(page);
      await context.setOffline(true);

      // Typed (or scanned) with Enter: not on this tablet, and it can be logged by id anyway.
      const field = page.getByLabel(/Slab id or heat number/);
      await field.fill(wrongId.toLowerCase());
      await field.press("Enter");
      const notHere = page.getByTestId("not-on-tablet");
      await notHere.waitFor();
      expect(await notHere.textContent()).toContain(`${wrongId} is not on this tablet — it will be checked when the network is back.`);
      await snap(page, "yard-sync-not-on-tablet-offline-tablet");
      await page.getByRole("button", { name: `Log defects on ${wrongId}` }).click();
      await page.waitForURL(new RegExp(`/yard/slabs/${wrongId}$`));
      await page.getByTestId("unknown-slab").waitFor();
      expect(await page.locator("[data-slab-source]").getAttribute("data-slab-source")).toBe("unknown");
      await logDefect(page, { type: "PIN", severity: "Moderate (2)", photo: true });
      const clientKey = await saved(page);
      await snap(page, "yard-sync-unknown-slab-offline-tablet");

      // Back online: the server refuses the id; the entry comes back marked, with its photo.
      await context.setOffline(false);
      const fix = page.locator(`[data-testid="slab-id-fix"][data-client-key="${clientKey}"]`);
      await fix.waitFor({ timeout: 30_000 });
      expect(await page.getByTestId("slab-id-fixes").textContent()).toContain("Slab id not found — fix it");
      expect(await fix.textContent()).toContain(`The server has no slab ${wrongId}.`);
      expect(await fix.textContent()).toContain("1 photo kept with it");
      expect(storedByKey(clientKey)).toEqual([]);
      expect(posts.defects).toBe(1);
      expect(posts.photos).toBe(0);
      // Nothing is lost: the entry and its photo wait in IndexedDB.
      const kept = await page.evaluate(
        (key) =>
          new Promise<{ entry: string | null; photos: number }>((resolve, reject) => {
            const open = indexedDB.open("strandsight-outbox");
            open.onsuccess = () => {
              const tx = open.result.transaction(["entries", "photos"]);
              const e = tx.objectStore("entries").get(key);
              const p = tx.objectStore("photos").index("by-entry").count(key);
              tx.oncomplete = () => resolve({ entry: (e.result as { slabId: string } | undefined)?.slabId ?? null, photos: p.result });
            };
            open.onerror = () => reject(open.error ?? new Error("the outbox database did not open"));
          }),
        clientKey,
      );
      expect(kept).toEqual({ entry: wrongId, photos: 1 });
      await snap(page, "yard-sync-fix-slab-id-tablet");

      // On the yard screen too, with the field to correct it.
      await page.getByRole("link", { name: "Find another slab", exact: true }).click();
      await page.getByRole("heading", { level: 1, name: "Find a slab" }).waitFor();
      const onYard = page.locator(`[data-testid="slab-id-fix"][data-client-key="${clientKey}"]`);
      await onYard.getByLabel("Right slab id for this entry").fill(right.slab_id.toLowerCase());
      await onYard.getByRole("button", { name: "Send with this id" }).click();
      await page.locator(`[data-testid="entry"][data-client-key="${clientKey}"][data-status="sent"]`).waitFor({ timeout: 30_000 });
      expect(await page.getByTestId("slab-id-fixes").count()).toBe(0);
      const stored = storedByKey(clientKey);
      expect(stored).toHaveLength(1);
      expect(stored[0]).toMatchObject({ slab_id: right.slab_id, type_code: "PIN", severity: 2, photos: 1 });
      expect(sqlite().prepare("select count(*) from defects d join slabs s on s.id = d.slab_id where s.slab_id = ?").pluck().get(wrongId)).toBe(0);
      expect(posts).toMatchObject({ defects: 2, photos: 1 });
      expect(apartFromOffline(errors).filter((e) => !e.includes("status of 404"))).toEqual([]);
      await context.close();
    },
    SLOW,
  );

  it(
    "when the inspector taps Next slab, then it goes to the next piece of the same heat and strand, and after the last piece to the next slab not yet inspected, offline too",
    async () => {
      // A heat of the last shifts with at least three pieces on strand 1, not the last heat cast.
      const first = pick(
        `s.piece_no = 1 and st.strand_no = 1 and ${UNINSPECTED} and s.cast_at >= ? and s.cast_at < (select max(cast_at) from slabs) - 3 * 3600000
       and (select count(*) from slabs x where x.heat_id = s.heat_id and x.strand_id = s.strand_id) >= 3`,
        Date.now() - 24 * 3_600_000,
      );
      const pieces = sqlite().prepare(`${SLAB} where h.heat_no = ? and st.strand_no = 1 order by s.piece_no`).all(first.heat_no) as SlabRow[];
      pieces.forEach((p) => used.add(p.slab_id));
      const last = pieces[pieces.length - 1]!;
      const { context, page, errors } = await tabletWithSet();

      await page.goto(`${env.server.baseUrl}/yard/slabs/${first.slab_id}`);
      await page.getByTestId("slab-drawing").waitFor();
      await logDefect(page, { type: "DEP", severity: "Minor (1)", photo: false });
      await saved(page);
      // After saving: the next piece, said plainly.
      const next = page.getByTestId("flash").getByTestId("next-slab");
      expect(await next.getAttribute("data-next-slab")).toBe(pieces[1]!.slab_id);
      expect(await next.textContent()).toContain(`Piece 2 of heat ${first.heat_no}, strand 1`);
      await snap(page, "yard-sync-next-slab-tablet");
      await next.click();
      await page.waitForURL(new RegExp(`/yard/slabs/${pieces[1]!.slab_id}$`));
      await page.getByRole("heading", { level: 1, name: `Slab ${pieces[1]!.slab_id}` }).waitFor();
      // The form is empty again for the new slab.
      expect(await page.getByTestId("placement-mark").count()).toBe(0);

      // From the last piece, offline: the first slab not yet inspected cast after it on strand 1.
      const expected = sqlite()
        .prepare(`${SLAB} where st.strand_no = 1 and s.cast_at > ? and ${UNINSPECTED} order by s.cast_at limit 1`)
        .get(last.cast_at) as SlabRow;
      await context.setOffline(true);
      await page.getByRole("link", { name: "Find another slab", exact: true }).click();
      const field = page.getByLabel(/Slab id or heat number/);
      await field.fill(last.slab_id);
      await field.press("Enter");
      await page.waitForURL(new RegExp(`/yard/slabs/${last.slab_id}$`));
      const header = page.getByTestId("next-slab").first();
      await header.waitFor();
      expect(await header.getAttribute("data-next-kind")).toBe("uninspected");
      expect(await header.getAttribute("data-next-slab")).toBe(expected.slab_id);
      expect(await header.textContent()).toContain(
        `Last piece of heat ${first.heat_no} on strand 1. Next not yet inspected: heat ${expected.heat_no}, strand 1`,
      );
      await snap(page, "yard-sync-next-uninspected-offline-tablet");
      await header.click();
      await page.waitForURL(new RegExp(`/yard/slabs/${expected.slab_id}$`));
      await page.getByRole("heading", { level: 1, name: `Slab ${expected.slab_id}` }).waitFor();
      expect(await page.locator("[data-slab-source]").getAttribute("data-slab-source")).toBe("tablet");
      await context.setOffline(false);
      expect(apartFromOffline(errors)).toEqual([]);
      await context.close();
    },
    SLOW,
  );

  it(
    "when a slab already rolled is given a slab-yard finding, then the tablet asks first, online and offline; 'No' keeps nothing, 'Yes' keeps it",
    async () => {
      const rolled = sqlite()
        .prepare(
          `${SLAB.replace("select ", "select p.product_id, p.rolled_at, ")} join products p on p.slab_id = s.id
         where s.cast_at >= ? order by s.cast_at, s.id`,
        )
        .all(Date.now() - 24 * 3_600_000) as (SlabRow & { product_id: string; rolled_at: number })[];
      expect(rolled.length).toBeGreaterThan(3);
      const [a, b] = rolled.filter((r) => !used.has(r.slab_id));
      used.add(a!.slab_id).add(b!.slab_id);
      const { context, page, errors } = await tabletWithSet();
      const posts = countPosts(page);

      await page.goto(`${env.server.baseUrl}/yard/slabs/${a!.slab_id}`);
      await page.getByTestId("slab-drawing").waitFor();
      const notice = page.getByTestId("rolled-notice");
      await notice.waitFor();
      expect(await notice.textContent()).toContain(`into coil ${a!.product_id}`);
      // "Found at: Slab yard" is the form's default: the question comes before anything is kept.
      await logDefect(page, { type: "SCB", severity: "Minor (1)", photo: false });
      const question = page.getByTestId("rolled-question");
      await question.waitFor();
      const rolledOn = new Date(a!.rolled_at).toLocaleString("en-GB", { day: "numeric", month: "short", year: "numeric", hour: "2-digit", minute: "2-digit" });
      expect(await question.locator("#rolled-question").textContent()).toBe(
        `Already rolled. This slab was rolled on ${rolledOn} into coil ${a!.product_id}. Log a slab-yard finding anyway?`,
      );
      await snap(page, "yard-sync-rolled-question-tablet");
      expect(await page.getByTestId("flash").count()).toBe(0);
      expect(await page.getByTestId("entry").count()).toBe(0);
      // No: nothing kept; found at the hot mill instead, it is kept without asking.
      await question.getByRole("button", { name: "No, change “Found at”" }).click();
      await question.waitFor({ state: "detached" });
      await page.getByRole("radio", { name: "Hot mill", exact: true }).click();
      await page.getByRole("button", { name: "Save defect" }).click();
      const hotMill = await saved(page);
      await page.locator(`[data-testid="entry"][data-client-key="${hotMill}"][data-status="sent"]`).waitFor({ timeout: 30_000 });
      expect(storedByKey(hotMill)).toMatchObject([{ slab_id: a!.slab_id, stage: "hot_mill", type_code: "SCB" }]);
      expect(posts.defects).toBe(1);

      // Offline, a rolled slab never opened before, from the tablet's set: asked too; Yes keeps it.
      await context.setOffline(true);
      await page.getByRole("link", { name: "Find another slab", exact: true }).click();
      const field = page.getByLabel(/Slab id or heat number/);
      await field.fill(b!.slab_id);
      await field.press("Enter");
      await page.waitForURL(new RegExp(`/yard/slabs/${b!.slab_id}$`));
      await page.getByTestId("rolled-notice").waitFor();
      expect(await page.locator("[data-slab-source]").getAttribute("data-slab-source")).toBe("tablet");
      await logDefect(page, { type: "SCB", severity: "Minor (1)", photo: false });
      await page.getByTestId("rolled-question").getByRole("button", { name: "Yes, log it as found in the slab yard" }).click();
      const yard = await saved(page);
      await snap(page, "yard-sync-rolled-kept-offline-tablet");
      await context.setOffline(false);
      await page.locator(`[data-testid="entry"][data-client-key="${yard}"][data-status="sent"]`).waitFor({ timeout: 30_000 });
      expect(storedByKey(yard)).toMatchObject([{ slab_id: b!.slab_id, stage: "slab_yard", type_code: "SCB" }]);
      expect(posts.defects).toBe(2);
      expect(apartFromOffline(errors)).toEqual([]);
      await context.close();
    },
    SLOW,
  );

  it(
    "when the process engineer changes the tablets' window on the setup screen, then a value out of range is refused in words and a good one is saved with an audit row",
    async () => {
      const context = await env.browser.newContext({ viewport: DESKTOP });
      const page = await context.newPage();
      const errors = collectPageErrors(page);
      await signInAs(page, env.server.baseUrl, "process", TEST_PASSWORD);
      await page.goto(`${env.server.baseUrl}/setup`);
      const field = page.getByLabel("Slabs cast in the last … hours");
      expect(await field.inputValue()).toBe("48");
      await field.fill("400");
      await page.getByRole("button", { name: "Save yard settings" }).click();
      await page.getByText("At most 336 hours (14 days).").waitFor();
      expect(sqlite().prepare("select count(*) from plant_settings where key = 'yard.tablets'").pluck().get()).toBe(0);
      await field.fill("24");
      await page.getByRole("button", { name: "Save yard settings" }).click();
      await page.getByText("Tablets take the new window at their next sync.").waitFor();
      await field.scrollIntoViewIfNeeded();
      await snap(page, "yard-sync-settings-desktop");
      expect(JSON.parse(sqlite().prepare("select value from plant_settings where key = 'yard.tablets'").pluck().get() as string)).toEqual({
        syncWindowHours: 24,
      });
      const audit = sqlite()
        .prepare("select a.before, a.after, u.email from audit_log a join user u on u.id = a.user_id where a.entity_id = 'yard' order by a.id desc limit 1")
        .get() as { before: string; after: string; email: string };
      expect([JSON.parse(audit.before), JSON.parse(audit.after), audit.email]).toEqual([{ syncWindowHours: 48 }, { syncWindowHours: 24 }, "process@demo.test"]);
      const agent = await env.server.agentFor("process");
      expect((await agent.put("/api/yard/settings").set("Origin", env.server.baseUrl).send({ syncWindowHours: 48 })).status).toBe(200);
      expect(errors).toEqual([]);
      await context.close();
    },
    SLOW,
  );
});
