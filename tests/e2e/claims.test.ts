import ExcelJS from "exceljs";
import { describe, expect, it } from "vitest";
import type { Claim, HeatHistory, Trace } from "../../shared/api/claims";
import { DISPOSITION_LABELS, type Disposition } from "../../shared/domain";
import { collectPageErrors, DESKTOP, makeJpeg, readRows, signInAs, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";

const env = useAppAndBrowser({ scale: 0.02 });

const SHEETS = ["Summary", "Chemistry", "Casting conditions", "Process samples", "Slabs", "Defects", "Causes", "Investigations", "Claims", "Audit trail"];
const dispositionText = (d: string | null) => (d ? (DISPOSITION_LABELS[d as Disposition] ?? d) : "—");

/** A coil of the demo plant whose slab has a live defect; heats with photos first, so thumbnails show. */
function coilWithDefects() {
  return env.server.db.$client
    .prepare(
      `select p.product_id as productId, s.slab_id as slabId, h.heat_no as heatNo from products p join slabs s on s.id = p.slab_id join heats h on h.id = s.heat_id
       where p.kind = 'coil' and exists (select 1 from defects d where d.slab_id = s.id and d.deleted_at is null)
       order by exists (select 1 from defect_photos f join defects d on d.id = f.defect_id join slabs x on x.id = d.slab_id where x.heat_id = h.id and f.deleted_at is null) desc, p.id
       limit 1`,
    )
    .get() as { productId: string; slabId: string; heatNo: string };
}

describe("claims in the browser", () => {
  it("when a claims officer traces a coil, then the chain and the heat's slabs and defects are the API's, the printable history prints without the app around it, and the workbook has the ten sheets with the history's slabs", async () => {
    const coil = coilWithDefects();
    // Two photos on a defect of the traced slab, so the trace has thumbnails to show.
    const defectId = env.server.db.$client
      .prepare("select d.id from defects d join slabs s on s.id = d.slab_id where s.slab_id = ? and d.deleted_at is null order by d.id limit 1")
      .pluck()
      .get(coil.slabId) as number;
    const quality = await env.server.agentFor("quality");
    await quality
      .post(`/api/defects/${defectId}/photos`)
      .set("Origin", env.server.baseUrl)
      .attach("photos", await makeJpeg(), "edge-1.jpg")
      .attach("photos", await makeJpeg(640, 480), "edge-2.jpg")
      .expect(201);
    const api = await env.server.agentFor("claims");
    const traced = (await api.get(`/api/trace?q=${coil.productId}`).expect(200)).body as Trace;
    expect(traced.found).toBe("coil");
    expect(traced.slabId).toBe(coil.slabId);
    const context = await env.browser.newContext({ viewport: TABLET, acceptDownloads: true });
    const page = await context.newPage();
    page.setDefaultTimeout(15_000);
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "claims", TEST_PASSWORD);

    // From the claims home to the trace; Enter submits and the id goes into the address.
    await page.getByTestId("claims-trace").click();
    await page.getByRole("heading", { level: 1, name: "Trace" }).waitFor();
    await page.getByTestId("trace-input").fill(coil.productId.toLowerCase());
    await page.getByTestId("trace-input").press("Enter");
    await page.waitForURL((u) => u.pathname === "/trace" && u.searchParams.get("q") === coil.productId.toLowerCase());
    const chain = page.getByTestId("trace-chain");
    await chain.waitFor();
    expect(await chain.getAttribute("data-found")).toBe("coil");
    expect(await chain.getByTestId("chain-product").locator("[data-field=id]").textContent()).toBe(coil.productId);
    expect(await chain.getByTestId("chain-slab").locator("[data-field=id]").textContent()).toBe(coil.slabId);
    expect(await chain.getByTestId("chain-heat").locator("[data-field=id]").textContent()).toBe(coil.heatNo);

    // Every slab of the heat with its disposition, the traced one marked.
    const h = traced.history;
    const slabRows = await readRows(page, "[data-testid=history-slab-row]");
    expect(slabRows.map((r) => [r.slabId, r.disposition, r.defects, r.products])).toEqual(
      h.slabs.map((s) => [s.slabId, dispositionText(s.disposition), String(s.defects), s.products.join(", ") || "—"]),
    );
    expect(await page.locator("[data-testid=history-slab-row][data-traced=true]").getAttribute("data-slab")).toBe(coil.slabId);
    // Every live defect, with its thumbnails and its live causes.
    const shownDefects = await page.getByTestId("history-defect").evaluateAll((els) => els.map((e) => Number(e.getAttribute("data-defect-id"))));
    expect(shownDefects).toEqual(h.defects.map((d) => d.id));
    expect(h.defects.some((d) => d.slabId === coil.slabId)).toBe(true);
    const thumbs = await page
      .getByTestId("defect-photos")
      .locator("img")
      .evaluateAll((imgs) => imgs.map((i) => i.getAttribute("src")));
    expect(h.defects.find((d) => d.id === defectId)!.photos).toHaveLength(2);
    expect(thumbs).toEqual(h.defects.flatMap((d) => d.photos.map((p) => p.thumbUrl)));
    // The thumbnails are real pictures the browser loads once they come into view (they load lazily).
    await page.getByTestId("defect-photos").first().scrollIntoViewIfNeeded();
    await expect
      .poll(() =>
        page
          .getByTestId("defect-photos")
          .locator("img")
          .evaluateAll((imgs) => imgs.every((i) => (i as HTMLImageElement).naturalWidth > 0)),
      )
      .toBe(true);
    const chips = await page.getByTestId("cause-chip").evaluateAll((els) => els.map((e) => e.getAttribute("data-tag")));
    expect(chips).toEqual(h.defects.flatMap((d) => h.causes.filter((c) => c.defectId === d.id && !c.removedAt).map((c) => c.tag)));
    expect(await page.getByTestId("history-claim").count()).toBe(h.claims.length);
    expect(await page.getByTestId("history-investigation").count()).toBe(h.investigations.length);
    await page.waitForLoadState("networkidle");
    await snap(page, "trace-coil-tablet");
    await page.setViewportSize(DESKTOP);
    await snap(page, "trace-coil-desktop");

    // The workbook: the server's file name, ten sheets, the Slabs sheet equal to the history's slabs.
    const [download] = await Promise.all([page.waitForEvent("download"), page.getByTestId("export-history").click()]);
    const today = new Date().toISOString().slice(0, 10);
    expect(download.suggestedFilename()).toBe(`strandsight-heat-${coil.heatNo}-history-internal-${today}.xlsx`);
    await page.getByTestId("export-history-done").waitFor();
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.readFile((await download.path())!);
    expect(wb.worksheets.map((w) => w.name)).toEqual(SHEETS);
    const hist = (await api.get(`/api/heats/${coil.heatNo}/history`).expect(200)).body as HeatHistory;
    const sheet = wb.getWorksheet("Slabs")!;
    const header = (sheet.getRow(1).values as unknown[]).slice(1);
    expect(header).toEqual([
      "Slab",
      "Strand",
      "Piece",
      "Length (mm)",
      "Width (mm)",
      "Thickness (mm)",
      "Weight (t)",
      "Cast at (UTC)",
      "Transition slab",
      "Disposition",
      "Defects",
      "Coils / plates",
    ]);
    const rows: unknown[][] = [];
    sheet.eachRow((row, n) => {
      if (n > 1) rows.push((row.values as unknown[]).slice(1));
    });
    expect(
      rows.map((r) => [
        r[0],
        r[1],
        r[2],
        r[3],
        r[4],
        r[5],
        r[6] ?? null,
        r[7] instanceof Date ? Math.round(r[7].getTime() / 1000) : null,
        r[8],
        r[9] ?? null,
        r[10],
        r[11] ?? "",
      ]),
    ).toEqual(
      hist.slabs.map((s) => [
        s.slabId,
        s.strand,
        s.pieceNo,
        s.lengthMm,
        s.widthMm,
        s.thicknessMm,
        s.weightT,
        s.castAt ? Math.round(Date.parse(s.castAt) / 1000) : null,
        s.transition ? "yes" : "no",
        s.disposition ? dispositionText(s.disposition) : null,
        s.defects,
        s.products.join(", "),
      ]),
    );

    // The printable history: the same slabs, ten parts, and a print button that prints.
    await page.getByTestId("printable-history").click();
    await page.waitForURL(`${env.server.baseUrl}/heats/${coil.heatNo}/history`);
    await page.getByRole("heading", { level: 1, name: `Heat ${coil.heatNo}` }).waitFor();
    expect(await page.getByTestId("history-part").count()).toBe(10);
    expect((await readRows(page, "[data-testid=history-slab-row]")).map((r) => r.slabId)).toEqual(hist.slabs.map((s) => s.slabId));
    expect(await page.getByTestId("history-defect").count()).toBe(hist.defects.length);
    expect(await page.getByText("Dispositions and claims follow the plant's quality procedures").isVisible()).toBe(true);
    await page.evaluate(() => {
      (window as unknown as { printed: number }).printed = 0;
      window.print = () => void ((window as unknown as { printed: number }).printed += 1);
    });
    await page.getByTestId("print-history").click();
    expect(await page.evaluate(() => (window as unknown as { printed: number }).printed)).toBe(1);
    await page.waitForLoadState("networkidle");
    await snap(page, "history-printable-desktop");
    await page.emulateMedia({ media: "print" });
    // On paper: no menu, no buttons; the heat page's full address is printed beside its link.
    expect(await page.getByRole("navigation", { name: "Main" }).isVisible()).toBe(false);
    expect(await page.getByTestId("print-history").isVisible()).toBe(false);
    expect(await page.getByText(`${env.server.baseUrl}/heats/${coil.heatNo}`).first().isVisible()).toBe(true);
    await page.setViewportSize({ width: 794, height: 1123 });
    await snap(page, "history-printable-print");
    await page.emulateMedia({ media: "screen" });
    await page.setViewportSize(TABLET);
    await snap(page, "history-printable-tablet");

    expect(errors).toEqual([]);
    await context.close();
  });

  it("when a claims officer records a claim with a traced coil and an unknown id, then the slab is linked and the unknown flagged; a duplicate number is refused in words; Under review and the e-mailed history show in the claim's history and the mail outbox", async () => {
    const coil = coilWithDefects();
    const api = await env.server.agentFor("claims");
    const context = await env.browser.newContext({ viewport: TABLET });
    const page = await context.newPage();
    page.setDefaultTimeout(15_000);
    const errors = collectPageErrors(page, [401, 409]);
    await signInAs(page, env.server.baseUrl, "claims", TEST_PASSWORD);
    const claimNo = `CL-BT-${String(Date.now()).slice(-6)}`;

    await page.getByTestId("record-claim").click();
    await page.getByRole("heading", { level: 1, name: "Record a claim" }).waitFor();
    // Nothing filled in: the form says what is missing, nothing is sent.
    await page.getByRole("button", { name: "Record the claim" }).click();
    await page.getByText("Give the claim number.").waitFor();
    await page.getByText("Say what the customer complains of.").waitFor();
    await page.getByLabel("Claim number").fill(claimNo);
    await page.getByLabel("Customer").fill("Fjordbay Tube Works (demo)");
    await page.getByLabel("Coil and plate ids").fill(`${coil.productId.toLowerCase()}\nK99999999`);
    expect(await page.getByLabel("Link the traced slabs").isChecked()).toBe(true);
    await page.getByLabel("Received on").fill("2026-05-04");
    await page.getByLabel("Defect complained of").fill("Slivers along the coil edge after pickling");
    await page.getByLabel("Quantity (t)").fill("24,45");
    await page.getByLabel("Notes (optional)").fill("Customer letter to follow.");
    await snap(page, "claim-new-tablet");
    await page.getByRole("button", { name: "Record the claim" }).click();
    await page.waitForURL(/\/claims\/\d+$/);
    const id = Number(new URL(page.url()).pathname.split("/").pop());
    await page.getByRole("heading", { level: 1, name: `Claim ${claimNo}` }).waitFor();
    const stored = (await api.get(`/api/claims/${id}`).expect(200)).body as Claim;
    expect(stored.productIds).toEqual([coil.productId, "K99999999"]);
    expect(stored.quantityT).toBe(24.45);
    // Shown as stored, to the hundredth as coil weights are (one decimal hid the second).
    await page
      .getByText(/^24\.45\s?t$/)
      .first()
      .waitFor();
    expect(stored.untracedProducts).toEqual(["K99999999"]);
    expect((await readRows(page, "[data-testid=linked-slab]")).map((r) => [r.slabId, r.heatNo, r.products])).toEqual([
      [coil.slabId, coil.heatNo, coil.productId],
    ]);
    expect(await page.getByTestId("untraced-id").allTextContents()).toEqual(["K99999999"]);
    expect(await page.locator("[data-testid=claim-product][data-untraced=true]").allTextContents()).toEqual(["K99999999not traced"]);

    // Under review, in words, stored as such.
    await page.getByTestId("status-under_review").click();
    await expect.poll(() => page.getByTestId("claim-status").first().getAttribute("data-status")).toBe("under_review");
    expect(await page.getByTestId("claim-status").first().textContent()).toBe("Under review");
    expect(((await api.get(`/api/claims/${id}`)).body as Claim).status).toBe("under_review");
    await page.locator("[data-action='claim.update'] [data-testid=claim-history-detail]").getByText("Status → Under review").waitFor();

    // An attachment goes up and is listed.
    await page
      .getByTestId("claim-attachment-input")
      .setInputFiles({ name: "customer-letter.txt", mimeType: "text/plain", buffer: Buffer.from("Claim letter (demo): slivers on the coil edge.\n") });
    await page.getByTestId("claim-attachment").filter({ hasText: "customer-letter.txt" }).waitFor();

    // E-mail the heat's history: queued, on the claim's history and in the outbox.
    const heat = page.locator(`[data-testid=claim-heat][data-heat="${coil.heatNo}"]`);
    await heat.getByTestId("email-history").click();
    const form = page.getByRole("form", { name: `E-mail the history of heat ${coil.heatNo}` });
    await form.getByLabel("Recipients").fill("quality-desk@fjordbay.example, not-an-address");
    await form.getByRole("button", { name: "Send the workbook" }).click();
    await form.getByText("Not an e-mail address: not-an-address.").waitFor();
    await form.getByLabel("Recipients").fill("quality-desk@fjordbay.example");
    await form.getByLabel("Message (optional)").fill("The heat's record for your claim (demo).");
    await form.getByRole("button", { name: "Send the workbook" }).click();
    await page.getByTestId("history-sent").getByText("see the claim's history").waitFor();
    const sent = page.locator("[data-action='claim.history.sent'] [data-testid=claim-history-detail]");
    await sent.waitFor();
    // Queued when answered (sent once the mail worker has passed: either, never "sent" before it is).
    expect(await sent.textContent()).toMatch(
      new RegExp(
        `^Heat ${coil.heatNo} history \\(customer edition\\) (queued for e-mail to quality-desk@fjordbay\\.example|sent to quality-desk@fjordbay\\.example \\(\\d{4}-\\d{2}-\\d{2} \\d{2}:\\d{2} UTC\\))$`,
      ),
    );
    const outbox = env.server.db.$client
      .prepare("select kind, to_addresses as toAddresses, subject, attachments from email_outbox where kind = 'heat_history' order by id desc limit 1")
      .get() as { kind: string; toAddresses: string; subject: string; attachments: string };
    expect(outbox.toAddresses).toContain("quality-desk@fjordbay.example");
    expect(outbox.subject).toBe(`Claim ${claimNo}: history of heat ${coil.heatNo}`);
    expect(outbox.attachments).toContain(`strandsight-heat-${coil.heatNo}-history-`);
    await page.waitForLoadState("networkidle");
    await snap(page, "claim-detail-tablet");
    await page.setViewportSize(DESKTOP);
    await snap(page, "claim-detail-desktop");

    // The list finds it by the coil, with its status in words and its counts.
    await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Claims" }).click();
    await page.getByTestId("claims-search").fill(coil.productId);
    await page.getByTestId("claims-search").press("Enter");
    await page.waitForURL((u) => u.searchParams.get("q") === coil.productId);
    const listed = (await api.get(`/api/claims?q=${coil.productId}`)).body.items as { claimNo: string }[];
    await expect.poll(() => page.getByTestId("claim-row").count()).toBe(listed.length);
    const row = (await readRows(page, `[data-testid=claim-row][data-claim-no="${claimNo}"]`))[0]!;
    expect(row).toMatchObject({ claimNo, customer: "Fjordbay Tube Works (demo)", receivedOn: "4 May 2026", status: "Under review", slabs: "1", heats: "1" });
    await page.getByRole("radio", { name: "Closed" }).click();
    await page.waitForURL((u) => u.searchParams.get("status") === "closed");
    await expect.poll(() => page.locator(`[data-testid=claim-row][data-claim-no="${claimNo}"]`).count()).toBe(0);

    // The same number again: the server's refusal, in words.
    await page.goto(`${env.server.baseUrl}/claims/new`);
    await page.getByLabel("Claim number").fill(claimNo.toLowerCase());
    await page.getByLabel("Customer").fill("Fjordbay Tube Works (demo)");
    await page.getByLabel("Defect complained of").fill("The same complaint twice");
    await page.getByRole("button", { name: "Record the claim" }).click();
    await page
      .getByRole("alert")
      .filter({ hasText: `A claim ${claimNo} is already on record.` })
      .first()
      .waitFor();
    expect(new URL(page.url()).pathname).toBe("/claims/new");

    expect(errors).toEqual([]);
    await context.close();
  });

  it("when a claims officer prepares the customer's history from a claim, then it opens with the claim's cover and the default parts, leaks no name, note or link into the app, takes causes on request, and the internal edition is one click away", async () => {
    const coil = coilWithDefects();
    const api = await env.server.agentFor("claims");
    const created = await api
      .post("/api/claims")
      .set("Origin", env.server.baseUrl)
      .send({
        claimNo: `CL-ED-${String(Date.now()).slice(-6)}`,
        customer: "Northgate Strip (demo)",
        productIds: [coil.productId],
        receivedOn: "2026-11-20",
        defectComplained: "Slivers",
        quantityT: 18,
      })
      .expect(201);
    const claim = created.body as Claim;
    // An inspector's note on the heat's first defect: internal, never in the customer's edition.
    env.server.db.$client
      .prepare(
        "update defects set note = 'day shift: check the edge again' where id = (select d.id from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id where h.heat_no = ? and d.deleted_at is null order by d.found_at, d.id limit 1)",
      )
      .run(coil.heatNo);
    const people = env.server.db.$client.prepare("select name from user").pluck().all() as string[];
    const context = await env.browser.newContext({ viewport: TABLET, acceptDownloads: true });
    const page = await context.newPage();
    page.setDefaultTimeout(15_000);
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "claims", TEST_PASSWORD);
    await page.goto(`${env.server.baseUrl}/claims/${claim.id}`);
    await page.getByRole("heading", { level: 1, name: `Claim ${claim.claimNo}` }).waitFor();
    await page.locator(`[data-testid=claim-heat][data-heat="${coil.heatNo}"]`).getByTestId("printable-history").click();
    await page.waitForURL(new RegExp(`/heats/${coil.heatNo}/history\\?edition=customer&claim=${claim.id}$`));
    await page.getByTestId("history-cover").waitFor();
    const article = page.getByTestId("printable-history");
    expect(await article.getAttribute("data-edition")).toBe("customer");
    expect(await page.getByTestId("history-cover").locator("[data-field='Claim']").textContent()).toBe(claim.claimNo);
    expect(await page.getByTestId("history-cover").locator("[data-field='Coils and plates of this heat']").textContent()).toBe(coil.productId);
    // Summary, chemistry, conditions, slabs, defects: the default parts, nothing else.
    const titles = async () =>
      (await page.getByTestId("history-part").locator("h2").allTextContents()).map((t) => t.replace(/^\d+\. /, "").replace(/ \(.*$/, ""));
    expect(await titles()).toEqual(["Summary", "Chemistry", "Casting conditions of the heat", "Slabs", "Defects"]);
    const text = (await article.textContent()) ?? "";
    expect(text).not.toContain("day shift: check the edge again");
    const officer = env.server.db.$client.prepare("select name from user where email like 'claims%' limit 1").pluck().get() as string;
    for (const who of people.filter((x) => x !== officer)) expect(text, who).not.toContain(who);
    // No link leads into the application from the document itself.
    expect(await article.locator("section[data-testid=history-part] a, [data-testid=history-cover] a").count()).toBe(0);
    await page.waitForLoadState("networkidle");
    await snap(page, "history-customer-tablet");

    // Causes on request: the part appears and the choice is kept in the address.
    await page
      .getByTestId("edition-chooser")
      .getByRole("checkbox", { name: /^Causes/ })
      .check();
    await page.waitForURL(/sections=[^&]*causes/);
    await expect.poll(titles).toEqual(["Summary", "Chemistry", "Casting conditions of the heat", "Slabs", "Defects", "Causes"]);

    // The workbook follows the same choice.
    const [download] = await Promise.all([page.waitForEvent("download"), page.getByTestId("export-history").click()]);
    expect(download.suggestedFilename()).toMatch(
      new RegExp(`^strandsight-heat-${coil.heatNo}-history-claim-${claim.claimNo}-customer-\\d{4}-\\d{2}-\\d{2}\\.xlsx$`),
    );
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.readFile((await download.path())!);
    expect(wb.worksheets.map((w) => w.name)).toEqual(["Cover", "Summary", "Chemistry", "Casting conditions", "Slabs", "Defects", "Causes"]);

    await page.setViewportSize(DESKTOP);
    await snap(page, "history-customer-desktop");
    await page.emulateMedia({ media: "print" });
    await page.setViewportSize({ width: 794, height: 1123 });
    await snap(page, "history-customer-print");
    await page.emulateMedia({ media: "screen" });
    await page.setViewportSize(TABLET);

    // The internal edition: every part, the audit trail in words.
    await page
      .getByTestId("edition-chooser")
      .getByRole("radio", { name: /^Internal/ })
      .check();
    await expect.poll(() => article.getAttribute("data-edition")).toBe("internal");
    expect(await titles()).toEqual([
      "Summary",
      "Chemistry",
      "Casting conditions of the heat",
      "Process samples",
      "Slabs",
      "Defects",
      "Causes",
      "Investigations",
      "Claims",
      "Audit trail",
    ]);
    const what = await page.locator("[data-testid=audit-row] [data-field=what]").allTextContents();
    expect(what.length).toBeGreaterThan(0);
    for (const w of what) expect(w).not.toMatch(/[{}"]|sha256|_id\b/);
    expect(errors).toEqual([]);
    await context.close();
  });

  it("when a quality engineer opens a claim, then it reads without any control to change it; an inspector is refused the trace", async () => {
    const id = env.server.db.$client
      .prepare("select c.id from claims c where exists (select 1 from claim_slabs cs where cs.claim_id = c.id) order by c.id limit 1")
      .pluck()
      .get() as number;
    const context = await env.browser.newContext({ viewport: DESKTOP });
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    await signInAs(page, env.server.baseUrl, "quality", TEST_PASSWORD);
    await page.getByRole("heading", { level: 1, name: "Quality" }).waitFor();
    const menu = await page.getByRole("navigation", { name: "Main" }).getByRole("link").allTextContents();
    expect(menu).toContain("Claims");
    expect(menu).toContain("Trace");
    await page.goto(`${env.server.baseUrl}/claims/${id}`);
    await page.getByTestId("claim-customer").waitFor();
    expect(await page.getByTestId("linked-slab").count()).toBeGreaterThan(0);
    expect(await page.getByRole("form").count()).toBe(0);
    expect(await page.getByRole("radiogroup", { name: "Change the status" }).count()).toBe(0);
    expect(await page.getByRole("button", { name: /Unlink|Save the notes|Link/ }).count()).toBe(0);
    expect(await page.getByTestId("claim-attachment-input").count()).toBe(0);
    expect(await page.getByTestId("claim-notes").count()).toBe(1);
    await page.goto(`${env.server.baseUrl}/claims`);
    expect(await page.getByTestId("record-claim").count()).toBe(0);
    await page.goto(`${env.server.baseUrl}/claims/new`);
    await page.getByRole("heading", { name: "Not open to your role" }).waitFor();
    expect(errors).toEqual([]);
    await context.close();

    const inspector = await env.browser.newContext({ viewport: TABLET });
    const ipage = await inspector.newPage();
    const ierrors = collectPageErrors(ipage);
    await signInAs(ipage, env.server.baseUrl, "inspector", TEST_PASSWORD);
    await ipage.goto(`${env.server.baseUrl}/trace?q=K26000001`);
    await ipage.getByRole("heading", { name: "Not open to your role" }).waitFor();
    expect(await ipage.getByTestId("trace-chain").count()).toBe(0);
    expect(ierrors).toEqual([]);
    await inspector.close();
  });

  it("when a claims officer traces an id nothing on record carries, then the server's message shows", async () => {
    const context = await env.browser.newContext({ viewport: TABLET });
    const page = await context.newPage();
    const errors = collectPageErrors(page, [401, 404]);
    await signInAs(page, env.server.baseUrl, "claims", TEST_PASSWORD);
    await page.goto(`${env.server.baseUrl}/trace`);
    await page.getByTestId("trace-input").fill("ZZ-NOT-HERE");
    await page.getByTestId("trace-input").press("Enter");
    const api = await env.server.agentFor("claims");
    const refused = await api.get("/api/trace?q=ZZ-NOT-HERE").expect(404);
    await page.getByTestId("trace-error").getByText(refused.body.error.message).waitFor();
    expect(await page.getByTestId("trace-chain").count()).toBe(0);
    await snap(page, "trace-unknown-tablet");
    expect(errors).toEqual([]);
    await context.close();
  });
});
