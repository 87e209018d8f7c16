import { execFileSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import ExcelJS from "exceljs";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type request from "supertest";
import { csv } from "../helpers/workbooks";
import { asCellText } from "../../server/lib/cells";
import { createTestApp, type TestApp } from "../helpers/test-app";

let t: TestApp;
let claims: request.Agent;
let quality: request.Agent;
let inspector: request.Agent;
let process_: request.Agent;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.02, fakeSmtp: true });
  claims = await t.agentFor("claims");
  quality = await t.agentFor("quality");
  inspector = await t.agentFor("inspector");
  process_ = await t.agentFor("process");
});
afterAll(() => t?.close());

const O = () => t.env.BETTER_AUTH_URL;
const one = (sql: string, ...a: unknown[]) => t.db.$client.prepare(sql).get(...a) as Record<string, any>;
const all = (sql: string, ...a: unknown[]) => t.db.$client.prepare(sql).all(...a) as Record<string, any>[];
const n = (sql: string, ...a: unknown[]) =>
  t.db.$client
    .prepare(sql)
    .pluck()
    .get(...a) as number;

async function download(agent: request.Agent, url: string) {
  const res = await agent
    .get(url)
    .buffer(true)
    .parse((r, cb) => {
      const chunks: Buffer[] = [];
      r.on("data", (c: Buffer) => chunks.push(c));
      r.on("end", () => cb(null, Buffer.concat(chunks)));
    });
  return res as typeof res & { body: Buffer };
}

/** A heat with at least three defects, and one of its slabs. */
const heatWithDefects = () =>
  one(
    `select h.heat_no, min(s.slab_id) as slab_id from heats h join slabs s on s.heat_id = h.id join defects d on d.slab_id = s.id
     where d.deleted_at is null group by h.id having count(d.id) >= 3 order by h.id limit 1`,
  ) as { heat_no: string; slab_id: string };

describe("the coil and plate trace", () => {
  it("when the rolling mill's list is imported, then the dry run writes nothing, the import creates the mapping, and a repeat is unchanged", async () => {
    const { slab_id } = heatWithDefects();
    const file = csv(
      ["product_id", "kind", "slab_id", "rolled_at", "weight_t"],
      [
        { product_id: "tc-90001", kind: "coil", slab_id, rolled_at: "2026-11-20T06:00:00Z", weight_t: 23.5 },
        { product_id: "TP-90002", kind: "plate", slab_id, rolled_at: "2026-11-20T07:00:00Z", weight_t: 8.2 },
      ],
    );
    const dry = await process_.post("/api/import/products?dryRun=true").set("Origin", O()).attach("file", file, "coils.csv");
    expect(dry.status).toBe(200);
    expect(dry.body.counts).toEqual({ created: 2, updated: 0, unchanged: 0 });
    expect(n("select count(*) from products where product_id in ('TC-90001', 'TP-90002')")).toBe(0);
    const real = await process_.post("/api/import/products").set("Origin", O()).attach("file", file, "coils.csv");
    expect(real.status).toBe(201);
    expect(one("select p.kind, p.weight_t, s.slab_id from products p join slabs s on s.id = p.slab_id where p.product_id = 'TC-90001'")).toEqual({
      kind: "coil",
      weight_t: 23.5,
      slab_id,
    });
    const again = await process_.post("/api/import/products").set("Origin", O()).attach("file", file, "coils.csv");
    expect(again.body.counts).toEqual({ created: 0, updated: 0, unchanged: 2 });
  });

  it("when a row names an unknown slab or a wrong kind, then every such row is listed and nothing is written", async () => {
    const before = n("select count(*) from products");
    const file = csv(
      ["product_id", "kind", "slab_id"],
      [
        { product_id: "TC-91001", kind: "coil", slab_id: heatWithDefects().slab_id },
        { product_id: "TC-91002", kind: "coil", slab_id: "NO-SUCH-SLAB" },
        { product_id: "TC-91003", kind: "sheet", slab_id: heatWithDefects().slab_id },
      ],
    );
    const res = await process_.post("/api/import/products").set("Origin", O()).attach("file", file, "coils.csv");
    expect(res.status).toBe(422);
    expect(res.body.error.details.errors).toEqual([
      { row: 3, column: "slab_id", message: "Slab NO-SUCH-SLAB is not on record (import the slabs first)." },
      { row: 4, column: "kind", message: "Kind is coil or plate, not “sheet”." },
    ]);
    expect(n("select count(*) from products")).toBe(before);
  });

  it("when a coil, a slab or a heat id is traced, then each leads to the same heat with its slabs, defects and causes; an unknown id gets a plain 404", async () => {
    const { heat_no, slab_id } = heatWithDefects();
    const byCoil = await claims.get("/api/trace?q=tc-90001");
    expect(byCoil.status).toBe(200);
    expect(byCoil.body).toMatchObject({ found: "coil", slabId: slab_id, product: { productId: "TC-90001", kind: "coil", weightT: 23.5 } });
    expect(byCoil.body.history.heat.heatNo).toBe(heat_no);
    expect(byCoil.body.history.slabs.map((s: { slabId: string }) => s.slabId).sort()).toEqual(
      all("select s.slab_id from slabs s join heats h on h.id = s.heat_id where h.heat_no = ? order by s.slab_id", heat_no).map((r) => r.slab_id),
    );
    expect(byCoil.body.history.defects).toHaveLength(
      n(
        "select count(*) from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id where h.heat_no = ? and d.deleted_at is null",
        heat_no,
      ),
    );
    const bySlab = await quality.get(`/api/trace?q=${slab_id}`);
    expect(bySlab.body).toMatchObject({ found: "slab", slabId: slab_id });
    expect(bySlab.body.history.heat.heatNo).toBe(heat_no);
    const byHeat = await claims.get(`/api/trace?q=${heat_no.toLowerCase()}`);
    expect(byHeat.body.found).toBe("heat");
    const none = await claims.get("/api/trace?q=ZZ-404");
    expect(none.status).toBe(404);
    expect(none.body.error.message).toContain("Nothing on record is called ZZ-404");
    expect((await inspector.get(`/api/trace?q=${slab_id}`)).status).toBe(403);
  });
});

describe("claims", () => {
  it("when the demo is seeded, then its newest claims are still open (new or under review) for the officer to work on, the newest one new", () => {
    const seeded = all("select status from claims where notes = 'Invented demo claim.' order by received_on, id");
    expect(seeded.length).toBeGreaterThan(0);
    const open = seeded.filter((c) => c.status === "new" || c.status === "under_review").length;
    expect(open).toBeGreaterThanOrEqual(Math.min(3, seeded.length));
    expect(seeded.some((c) => c.status === "new")).toBe(true);
  });

  let claimId: number;
  it("when a claims officer records a claim naming a traced coil and an unknown one, then the traced slab is linked, the unknown one listed, and the record audited", async () => {
    const res = await claims
      .post("/api/claims")
      .set("Origin", O())
      .send({
        claimNo: "cl-2026-0901",
        customer: "Invented Coil Buyers Ltd (demo)",
        productIds: ["TC-90001", "XX-UNKNOWN"],
        receivedOn: "2026-11-28",
        defectComplained: "Slivers on the outer wraps",
        quantityT: 23.5,
        notes: "Customer sent photos",
      });
    expect(res.status).toBe(201);
    claimId = res.body.id;
    expect(res.body).toMatchObject({ claimNo: "CL-2026-0901", status: "new", slabs: 1, heats: [heatWithDefects().heat_no], untracedProducts: ["XX-UNKNOWN"] });
    expect(res.body.linkedSlabs[0]).toMatchObject({ slabId: heatWithDefects().slab_id, linkedVia: "trace", products: ["TC-90001"] });
    const dup = await claims
      .post("/api/claims")
      .set("Origin", O())
      .send({ claimNo: "CL-2026-0901", customer: "Again", receivedOn: "2026-11-28", defectComplained: "Again" });
    expect(dup.status).toBe(409);
    expect(n("select count(*) from audit_log where entity = 'claim' and entity_id = ? and action = 'claim.create'", String(claimId))).toBe(1);
  });

  it("when a slab is linked by search and the status changes, then the claim shows both and its history says so; a quality engineer reads but cannot change", async () => {
    const other = one("select slab_id from slabs order by id desc limit 1").slab_id as string;
    const linked = await claims
      .post(`/api/claims/${claimId}/slabs`)
      .set("Origin", O())
      .send({ slabIds: [other] });
    expect(linked.status).toBe(200);
    expect(linked.body.linkedSlabs.map((s: { slabId: string; linkedVia: string }) => [s.slabId, s.linkedVia])).toContainEqual([other, "search"]);
    const bad = await claims
      .post(`/api/claims/${claimId}/slabs`)
      .set("Origin", O())
      .send({ slabIds: ["NOPE-1"] });
    expect(bad.status).toBe(400);
    expect(bad.body.error.message).toBe("No slab NOPE-1 on record.");
    const status = await claims.patch(`/api/claims/${claimId}`).set("Origin", O()).send({ status: "under_review" });
    expect(status.body.status).toBe("under_review");
    const unlink = await claims.delete(`/api/claims/${claimId}/slabs/${other}`).set("Origin", O());
    expect(unlink.body.linkedSlabs).toHaveLength(1);
    expect(unlink.body.history.map((h: { action: string }) => h.action)).toEqual(["claim.create", "claim.slabs.link", "claim.update", "claim.slabs.unlink"]);
    expect((await quality.get(`/api/claims/${claimId}`)).status).toBe(200);
    expect((await quality.patch(`/api/claims/${claimId}`).set("Origin", O()).send({ status: "closed" })).status).toBe(403);
  });

  it("when the history workbook is e-mailed from the claim, then it is queued with the workbook attached, arrives over SMTP, and the claim logs the sending", async () => {
    const { heat_no } = heatWithDefects();
    const notLinked = one("select heat_no from heats where heat_no <> ? order by id desc limit 1", heat_no).heat_no as string;
    const refused = await claims
      .post(`/api/claims/${claimId}/send-history`)
      .set("Origin", O())
      .send({ heatNo: notLinked, to: ["buyer@example.test"] });
    expect(refused.status).toBe(400);
    expect(refused.body.error.code).toBe("heat_not_linked");

    const res = await claims
      .post(`/api/claims/${claimId}/send-history`)
      .set("Origin", O())
      .send({ heatNo: heat_no, to: ["buyer@example.test"], message: "As discussed on the phone." });
    expect(res.status).toBe(202);
    const row = one("select * from email_outbox where id = ?", res.body.messageId);
    expect(row).toMatchObject({ kind: "heat_history", status: "queued", to_addresses: "buyer@example.test" });
    await t.mailer.processDue();
    const sent = one("select * from email_outbox where id = ?", res.body.messageId);
    expect(sent.status).toBe("sent");
    const got = one("select * from mail_received where message_id = ?", sent.message_id);
    const att = JSON.parse(got.attachments);
    expect(att).toHaveLength(1);
    // The customer edition unless the officer chose the internal one, named for the claim.
    const claimNo = one("select claim_no from claims where id = ?", claimId).claim_no as string;
    expect(att[0].filename).toMatch(new RegExp(`^strandsight-heat-${heat_no}-history-claim-${claimNo}-customer-\\d{4}-\\d{2}-\\d{2}\\.xlsx$`));
    expect(att[0].contentType).toBe("application/vnd.openxmlformats-officedocument.spreadsheetml.sheet");
    expect(got.text_body).toContain("As discussed on the phone.");
    // Said as it stood: queued when answered, sent (with the time) once the mail server took it.
    expect(res.body.claim.history.at(-1)).toMatchObject({
      action: "claim.history.sent",
      detail: `Heat ${heat_no} history (customer edition) queued for e-mail to buyer@example.test`,
    });
    const after = (await claims.get(`/api/claims/${claimId}`)).body;
    const sentAt = new Date(sent.sent_at).toISOString().slice(0, 16).replace("T", " ");
    expect(after.history.at(-1)).toMatchObject({
      action: "claim.history.sent",
      detail: `Heat ${heat_no} history (customer edition) sent to buyer@example.test (${sentAt} UTC)`,
    });
  });
});

describe("the heat history workbook", () => {
  const INJECTIONS = ["=1+1", "+41+1", "-2+3", "@SUM(1,1)", "\t=2+2", "\r=3+3", '=HYPERLINK("http://example.test","click")'];
  let heatNo: string;
  let wb: ExcelJS.Workbook;
  let file: string;

  beforeAll(async () => {
    heatNo = heatWithDefects().heat_no;
    // Notes that a spreadsheet could take for formulas, and a photo, on this heat's defects.
    const ids = all(
      "select d.id from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id where h.heat_no = ? and d.deleted_at is null order by d.id",
      heatNo,
    ).map((r) => r.id as number);
    INJECTIONS.forEach((text, i) => t.db.$client.prepare("update defects set note = ? where id = ?").run(text, ids[i % ids.length]));
    const jpeg = await sharp({ create: { width: 640, height: 480, channels: 3, background: "#6a4" } })
      .jpeg()
      .toBuffer();
    const quality2 = await t.agentFor("quality");
    const up = await quality2
      .post(`/api/defects/${ids[0]}/photos`)
      .set("Origin", O())
      .attach("photos", jpeg, "crack.jpg")
      .attach("photos", await sharp(jpeg).rotate(90).toBuffer(), "crack-2.jpg");
    expect(up.status).toBe(201);
    const res = await download(claims, `/api/heats/${heatNo}/history.xlsx`);
    expect(res.status).toBe(200);
    expect(res.headers["content-disposition"]).toContain(`strandsight-heat-${heatNo}-history-`);
    wb = new ExcelJS.Workbook();
    await wb.xlsx.load(res.body as never);
    file = path.join(t.dir, "history.xlsx");
    fs.writeFileSync(file, res.body);
  });

  it("when it is read back, then it has the ten sheets, frozen headers, autofilters, landscape print setup with repeated titles, and units in the headers", () => {
    expect(wb.worksheets.map((w) => w.name)).toEqual([
      "Summary",
      "Chemistry",
      "Casting conditions",
      "Process samples",
      "Slabs",
      "Defects",
      "Causes",
      "Investigations",
      "Claims",
      "Audit trail",
    ]);
    for (const ws of wb.worksheets) {
      expect(ws.views[0], ws.name).toMatchObject({ state: "frozen", ySplit: 1 });
      expect(ws.pageSetup.orientation, ws.name).toBe("landscape");
      if (ws.name !== "Summary") {
        expect(ws.autoFilter, ws.name).toBeTruthy();
        expect(ws.pageSetup.printTitlesRow, ws.name).toBe("1:1");
      }
    }
    expect(wb.getWorksheet("Slabs")!.getRow(1).values).toContain("Length (mm)");
    expect(wb.getWorksheet("Casting conditions")!.getRow(1).values).toContain("Casting speed (m/min)");
  });

  it("when its cells are compared with the database, then slabs, defects, chemistry, conditions with sources and causes are the stored values", () => {
    const slabs = all(
      "select s.slab_id, s.length_mm, s.width_mm, s.weight_t from slabs s join heats h on h.id = s.heat_id join strands st on st.id = s.strand_id where h.heat_no = ? order by st.strand_no, s.piece_no",
      heatNo,
    );
    const sl = wb.getWorksheet("Slabs")!;
    expect(sl.rowCount - 1).toBe(slabs.length);
    slabs.forEach((s, i) => {
      const r = sl.getRow(i + 2);
      expect([r.getCell(1).value, r.getCell(4).value, r.getCell(5).value, r.getCell(7).value]).toEqual([s.slab_id, s.length_mm, s.width_mm, s.weight_t]);
    });
    const defects = all(
      "select d.id, d.position_along_mm, d.note from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id where h.heat_no = ? and d.deleted_at is null order by d.found_at, d.id",
      heatNo,
    );
    const df = wb.getWorksheet("Defects")!;
    expect(df.rowCount - 1).toBe(defects.length);
    defects.forEach((d, i) => {
      const r = df.getRow(i + 2);
      expect([r.getCell(1).value, r.getCell(6).value, r.getCell(17).value ?? null]).toEqual([
        d.id,
        d.position_along_mm,
        d.note == null ? null : asCellText(d.note),
      ]);
    });
    // The slab cell links to the slab's page.
    expect((df.getRow(2).getCell(2).value as { hyperlink: string }).hyperlink).toBe(
      `${O()}/slabs/${defects.length ? one("select s.slab_id from defects d join slabs s on s.id = d.slab_id where d.id = ?", defects[0]!.id).slab_id : ""}`,
    );
    // Every photo's thumbnail is embedded, up to three per defect (the two photos added above).
    const perDefect = all(
      "select count(*) as k from defect_photos p join defects d on d.id = p.defect_id join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id where h.heat_no = ? and p.deleted_at is null and d.deleted_at is null group by d.id",
      heatNo,
    );
    expect(df.getImages()).toHaveLength(perDefect.reduce((sum, r) => sum + Math.min(3, r.k as number), 0));
    expect(df.getImages().length).toBeGreaterThanOrEqual(2);

    const heat = one("select * from heats where heat_no = ?", heatNo);
    const chem = Object.fromEntries(
      wb
        .getWorksheet("Chemistry")!
        .getSheetValues()
        .slice(2)
        .map((r) => [(r as unknown[])[1], (r as unknown[])[2]]),
    );
    expect(chem["Carbon (C)"]).toBe(heat.c_pct);
    expect(chem["Manganese (Mn)"]).toBe(heat.mn_pct);

    const cc = wb.getWorksheet("Casting conditions")!;
    const header = cc.getRow(1).values as string[];
    const speed = header.indexOf("Casting speed (m/min)");
    const speedSource = header.indexOf("Casting speed: source");
    // To the variable's displayed precision (casting speed 0.01 m/min, superheat 0.1 °C), as numbers.
    expect(cc.getRow(2).getCell(speed).value).toBe(Number(heat.casting_speed_m_min.toFixed(2)));
    const first = one(
      "select c.casting_speed_m_min, c.casting_speed_source, c.superheat_c from slab_conditions c join slabs s on s.id = c.slab_id where s.slab_id = ?",
      cc.getRow(3).getCell(2).value,
    );
    expect(cc.getRow(3).getCell(speed).value).toBe(Number(first.casting_speed_m_min.toFixed(2)));
    const superheat = header.indexOf("Superheat (°C)");
    expect(superheat).toBeGreaterThan(0);
    expect(cc.getRow(3).getCell(superheat).value).toBe(first.superheat_c === null ? null : Number(first.superheat_c.toFixed(1)));
    cc.eachRow((row, i) => {
      if (i === 1) return;
      const v = row.getCell(superheat).value;
      if (typeof v === "number") expect(String(v)).toMatch(/^-?\d+(\.\d)?$/);
    });
    expect(cc.getRow(3).getCell(speedSource).value).toBe(
      { slab: "slab record", samples: "process samples", heat: "heat record" }[first.casting_speed_source as string] ?? first.casting_speed_source,
    );

    const causes = wb.getWorksheet("Causes")!;
    expect(causes.rowCount - 1).toBe(
      n(
        "select count(*) from defect_causes dc join defects d on d.id = dc.defect_id join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id where h.heat_no = ? and d.deleted_at is null",
        heatNo,
      ),
    );
    expect(wb.getWorksheet("Slabs")!.getColumn(8).numFmt).toBe("yyyy-mm-dd hh:mm");
  });

  it("when notes start with = + - @, a tab or a CR, then they are written as text cells with the text format, never as formulas (OWASP CSV injection)", () => {
    const df = wb.getWorksheet("Defects")!;
    const seen: string[] = [];
    df.eachRow((row, i) => {
      if (i === 1) return;
      const cell = row.getCell(17);
      if (typeof cell.value === "string" && INJECTIONS.map(asCellText).includes(cell.value)) {
        expect(cell.type).toBe(ExcelJS.ValueType.String);
        expect(cell.formula).toBeUndefined();
        expect(cell.numFmt).toBe("@");
        seen.push(cell.value);
      }
    });
    const stored = all(
      "select d.note from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id where h.heat_no = ? and d.deleted_at is null",
      heatNo,
    )
      .map((r) => r.note as string)
      .filter((x) => INJECTIONS.includes(x));
    expect(stored.length).toBeGreaterThanOrEqual(3);
    expect(seen.sort()).toEqual(stored.map(asCellText).sort());
  });

  it("when LibreOffice Calc converts it, then every sheet converts without error and the injection strings come out as the same text", () => {
    const out = path.join(t.dir, "lo");
    fs.mkdirSync(out, { recursive: true });
    // Comma-separated, UTF-8, quoted text, every sheet to its own file (the last option, -1).
    // Missing LibreOffice is said in words, with the way to install it (not a bare "spawnSync soffice ENOENT").
    try {
      execFileSync("soffice", ["--version"], { stdio: "pipe", timeout: 60_000 });
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code === "ENOENT") {
        throw new Error(
          "This test opens the workbook in LibreOffice Calc, which is not installed here: `apt-get install -y --no-install-recommends libreoffice-calc` (README, Requirements).",
        );
      }
    }
    execFileSync(
      "soffice",
      [
        "--headless",
        "--norestore",
        `-env:UserInstallation=file://${path.join(t.dir, "lo-profile")}`,
        "--convert-to",
        "csv:Text - txt - csv (StarCalc):44,34,76,1,,0,false,true,false,false,false,-1",
        "--outdir",
        out,
        file,
      ],
      { stdio: "pipe", timeout: 120_000 },
    );
    const csvs = fs
      .readdirSync(out)
      .filter((f) => f.endsWith(".csv"))
      .sort();
    expect(csvs).toHaveLength(10);
    const defectsCsv = fs.readFileSync(
      path.join(
        out,
        csvs.find((f) => f.includes("Defects"))!,
      ),
      "utf8",
    );
    // Had they been formulas, LibreOffice would have written their results instead of the text.
    const stored = all(
      "select d.note from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id where h.heat_no = ? and d.deleted_at is null",
      heatNo,
    )
      .map((r) => r.note as string)
      .filter((x) => INJECTIONS.includes(x) && !/^[\t\r]/.test(x));
    expect(stored.length).toBeGreaterThanOrEqual(2);
    for (const s of stored) expect(defectsCsv).toContain(`"${s.replace(/"/g, '""')}"`);
    const slabsCsv = fs.readFileSync(
      path.join(
        out,
        csvs.find((f) => f.includes("Slabs"))!,
      ),
      "utf8",
    );
    expect(slabsCsv.split("\n")[1]).toContain(wb.getWorksheet("Slabs")!.getRow(2).getCell(1).value as string);
  }, 180_000);

  it("when a heat with claims is exported, then the claims' statuses and tonnage read as on the screens, not as stored", async () => {
    const claimed = one(
      `select h.heat_no, c.status, c.quantity_t from claims c join claim_slabs cs on cs.claim_id = c.id join slabs s on s.id = cs.slab_id join heats h on h.id = s.heat_id
       order by c.id limit 1`,
    );
    const res = await download(claims, `/api/heats/${claimed.heat_no}/history.xlsx`);
    expect(res.status).toBe(200);
    const book = new ExcelJS.Workbook();
    await book.xlsx.load(res.body as never);
    const ws = book.getWorksheet("Claims")!;
    const headers = (ws.getRow(1).values as unknown[]).slice(1);
    const status = headers.indexOf("Status") + 1;
    const words: Record<string, string> = { new: "New", under_review: "Under review", accepted: "Accepted", rejected: "Rejected", closed: "Closed" };
    const statuses = ws.getRows(2, ws.rowCount - 1)!.map((r) => r.getCell(status).value);
    expect(statuses).toContain(words[claimed.status as string]);
    for (const v of statuses) expect(Object.values(words)).toContain(v);
    expect(ws.getColumn(headers.indexOf("Quantity (t)") + 1).numFmt).toBe("0.00");
  });

  it("when an inspector asks for it, then 403 and no workbook", async () => {
    const res = await inspector.get(`/api/heats/${heatNo}/history.xlsx`);
    expect(res.status).toBe(403);
    expect(res.headers["content-type"]).toContain("application/json");
  });
});

describe("the two editions of a heat's history", () => {
  let heatNo: string;
  let claimId: number;
  const names = () => all("select name, email from user").flatMap((u) => [u.name as string, u.email as string]);

  beforeAll(async () => {
    heatNo = heatWithDefects().heat_no;
    const res = await claims
      .post("/api/claims")
      .set("Origin", O())
      .send({
        claimNo: "CL-2026-0950",
        customer: "Invented Strip Works (demo)",
        productIds: ["TC-90001", "ZZ-OTHER-1"],
        receivedOn: "2026-11-30",
        defectComplained: "Slivers",
        quantityT: 12.5,
      });
    expect(res.status).toBe(201);
    claimId = res.body.id;
    // An internal note, a cause with its own note, and a review, so there is something internal to keep out.
    const d = one(
      "select d.id from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id where h.heat_no = ? and d.deleted_at is null order by d.found_at, d.id limit 1",
      heatNo,
    ).id as number;
    t.db.$client.prepare("update defects set note = 'internal: ask the day shift' where id = ?").run(d);
    const tagged = await process_
      .post(`/api/defects/${d}/causes`)
      .set("Origin", O())
      .send({ tags: ["sen-clogging"], confidence: "probable", note: "engineer's private guess" });
    expect(tagged.status).toBe(201);
  });

  it("when the internal edition is read, then it holds every part and its audit trail speaks in words: no ids, hashes, keys or JSON", async () => {
    const res = await claims.get(`/api/heats/${heatNo}/history`);
    expect(res.status).toBe(200);
    expect(res.body.edition).toEqual({
      kind: "internal",
      sections: ["chemistry", "conditions", "samples", "slabs", "defects", "photos", "dispositions", "causes", "investigations", "claims", "audit"],
      cover: null,
    });
    expect(res.body.audit.length).toBeGreaterThan(0);
    for (const a of res.body.audit) {
      expect(Object.keys(a).sort()).toEqual(["at", "by", "what"]);
      expect(a.what).not.toMatch(/[{}[\]"]|sha256|client_key|type_id|slab_id|_id\b/);
    }
    const first = res.body.defects[0];
    expect(res.body.audit.map((a: { what: string }) => a.what)).toContain(
      `Tagged ${first.type} on slab ${first.slabId} with the cause SEN clogging (probable)`,
    );
    // The internal edition still carries the notes, names and review states.
    expect(first.note).toBe("internal: ask the day shift");
    expect(first.reviewStatus).not.toBeNull();
  });

  it("when the customer edition is asked for a claim, then the cover names the claim and its coils of this heat, the default parts only, and nothing internal is in it", async () => {
    const res = await claims.get(`/api/heats/${heatNo}/history?edition=customer&claim=${claimId}`);
    expect(res.status).toBe(200);
    const h = res.body;
    expect(h.edition.kind).toBe("customer");
    expect(h.edition.sections).toEqual(["chemistry", "conditions", "slabs", "defects", "photos", "dispositions"]);
    expect(h.edition.cover).toEqual({
      claimNo: "CL-2026-0950",
      customer: "Invented Strip Works (demo)",
      receivedOn: "2026-11-30",
      defectComplained: "Slivers",
      quantityT: 12.5,
      products: ["TC-90001"],
      otherProducts: ["ZZ-OTHER-1"],
      slabs: [heatWithDefects().slab_id],
      preparedBy: one("select name from user where email like 'claims%' limit 1").name,
    });
    const live = n(
      "select count(*) from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id where h.heat_no = ? and d.deleted_at is null",
      heatNo,
    );
    expect(h.defects.map((d: { id: number }) => d.id)).toEqual(Array.from({ length: live }, (_, i) => i + 1));
    for (const d of h.defects) expect([d.loggedBy, d.note, d.reviewStatus, d.causes.length]).toEqual([null, null, null, 0]);
    expect([h.causes, h.investigations, h.claims, h.audit, h.samples]).toEqual([[], [], [], [], null]);
    expect(h.slabs.every((s: { disposition: string | null }) => s.disposition === null || typeof s.disposition === "string")).toBe(true);
    // Coils only the claim's own: the heat's other coils may have gone to other customers.
    expect(h.slabs.flatMap((s: { products: string[] }) => s.products)).toEqual(["TC-90001"]);
    // No person of the plant but the officer who prepared it; no internal note.
    const text = JSON.stringify({ ...h, edition: { ...h.edition, cover: { ...h.edition.cover, preparedBy: "" } } });
    for (const who of names()) expect(text, who).not.toContain(who);
    expect(text).not.toContain("ask the day shift");
    expect(text).not.toContain("private guess");
  });

  it("when the officer adds causes and the record of changes, then the causes are the live ones without notes or names, and the record keeps only the defects' entries and the claim's own, in words", async () => {
    const res = await claims.get(`/api/heats/${heatNo}/history?edition=customer&claim=${claimId}&sections=slabs,defects,causes,audit`);
    expect(res.status).toBe(200);
    const h = res.body;
    expect(h.edition.sections).toEqual(["slabs", "defects", "causes", "audit"]);
    expect([h.heat.chemistry, h.heat.conditions]).toEqual([[], []]);
    expect(h.causes.length).toBe(
      n(
        `select count(*) from defect_causes dc join defects d on d.id = dc.defect_id join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id
       where h.heat_no = ? and d.deleted_at is null and dc.removed_at is null`,
        heatNo,
      ),
    );
    for (const c of h.causes) expect([c.note, c.by, c.removedAt]).toEqual([null, null, null]);
    // On each defect by name, never the tag's code.
    expect(h.defects.flatMap((d: { causes: string[] }) => d.causes)).toContain("SEN clogging");
    expect(h.defects.flatMap((d: { causes: string[] }) => d.causes)).not.toContain("sen-clogging");
    expect(h.audit.length).toBeGreaterThan(0);
    for (const a of h.audit) {
      expect(a.by).toBeNull();
      // The defects' entries and the claim's own; never another claim's.
      expect(a.what).toMatch(/^(Logged|Changed|Reviewed|Added|Removed|Tagged|Deleted|Claim CL-2026-0950 )/);
    }
    expect(h.audit.map((a: { what: string }) => a.what)).toContain("Claim CL-2026-0950 recorded");
    const text = JSON.stringify(h);
    expect(text).not.toContain("private guess");
    expect(text).not.toMatch(/Claim CL-2026-0901|Investigation INV-/);
  });

  it("when the customer workbook is downloaded, then it is the cover, the summary and the chosen sheets, without a link into the application, a person's name or an internal column", async () => {
    const res = await download(claims, `/api/heats/${heatNo}/history.xlsx?edition=customer&claim=${claimId}`);
    expect(res.status).toBe(200);
    expect(res.headers["content-disposition"]).toMatch(
      new RegExp(`strandsight-heat-${heatNo}-history-claim-CL-2026-0950-customer-\\d{4}-\\d{2}-\\d{2}\\.xlsx`),
    );
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(res.body as never);
    expect(wb.worksheets.map((w) => w.name)).toEqual(["Cover", "Summary", "Chemistry", "Casting conditions", "Slabs", "Defects"]);
    const cover = Object.fromEntries(
      wb
        .getWorksheet("Cover")!
        .getSheetValues()
        .slice(2)
        .map((r) => [(r as unknown[])[1], (r as unknown[])[2]]),
    );
    expect(cover).toMatchObject({
      Claim: "CL-2026-0950",
      Customer: "Invented Strip Works (demo)",
      "Coils and plates of this heat": "TC-90001",
      "Other coils and plates of the claim": "ZZ-OTHER-1 (not traced to this heat)",
      Edition: "For the customer",
    });
    expect(wb.getWorksheet("Defects")!.getRow(1).values).not.toEqual(expect.arrayContaining(["Logged by"]));
    const headers = (wb.getWorksheet("Defects")!.getRow(1).values as unknown[]).filter(Boolean);
    expect(headers).not.toContain("Note");
    expect(headers).not.toContain("Review");
    expect(headers[0]).toBe("No.");
    const people = names().filter((x) => x !== cover["Prepared by"]);
    wb.eachSheet((ws) =>
      ws.eachRow((row) =>
        row.eachCell((cell) => {
          expect(typeof cell.value === "object" && cell.value !== null && "hyperlink" in cell.value, `${ws.name} ${cell.address}`).toBe(false);
          const text = String(cell.text ?? "");
          expect(text).not.toContain(O());
          for (const who of people) expect(text, `${ws.name} ${cell.address}`).not.toContain(who);
        }),
      ),
    );
  });

  it("when the claim has no slab of the heat or a part is unknown, then 400 in words", async () => {
    const other = one(
      "select h.heat_no from heats h where not exists (select 1 from slabs s join claim_slabs cs on cs.slab_id = s.id where s.heat_id = h.id and cs.claim_id = ?) limit 1",
      claimId,
    ).heat_no as string;
    const res = await claims.get(`/api/heats/${other}/history?edition=customer&claim=${claimId}`);
    expect(res.status).toBe(400);
    expect(res.body.error).toMatchObject({
      code: "claim_not_on_heat",
      message: `Claim CL-2026-0950 has no slab of heat ${other}: link the slab to the claim first, or prepare the history without the claim.`,
    });
    const bad = await claims.get(`/api/heats/${heatNo}/history?edition=customer&sections=slabs,samples`);
    expect(bad.status).toBe(400);
    expect(JSON.stringify(bad.body.error)).toContain(
      "A part of the customer edition is one of: chemistry, conditions, slabs, defects, photos, dispositions, causes, investigations, audit.",
    );
  });

  it("when the officer e-mails the internal edition on purpose, then the workbook is the internal one and the mail says it is not for the customer", async () => {
    const res = await claims
      .post(`/api/claims/${claimId}/send-history`)
      .set("Origin", O())
      .send({ heatNo, to: ["quality-desk@example.test"], edition: "internal" });
    expect(res.status).toBe(202);
    await t.mailer.processDue();
    const sent = one("select * from email_outbox where id = ?", res.body.messageId);
    const got = one("select * from mail_received where message_id = ?", sent.message_id);
    expect(JSON.parse(got.attachments)[0].filename).toMatch(new RegExp(`^strandsight-heat-${heatNo}-history-internal-`));
    expect(got.text_body).toContain("This is the internal edition: it is not meant for the customer.");
    expect(res.body.claim.history.at(-1).detail).toBe(`Heat ${heatNo} history (internal edition) queued for e-mail to quality-desk@example.test`);
  });

  it("when an entry on the heat was logged and deleted, and a defect of it tagged from a list, then the internal trail says so in words and the customer's leaves the deleted entry out", async () => {
    const slab = heatWithDefects().slab_id;
    const logged = await inspector.post("/api/defects").set("Origin", O()).send({
      slab_id: slab,
      type_code: "DEP",
      face: "inner",
      position_along_mm: 1500,
      position_across_mm: 200,
      severity: 2,
      disposition: "grind",
      client_key: "history-deleted-0001",
      found_at: new Date().toISOString(),
    });
    expect(logged.status, JSON.stringify(logged.body)).toBe(201);
    expect((await inspector.delete(`/api/defects/${logged.body.id}`).set("Origin", O())).status).toBe(200);
    const live = one(
      "select d.id from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id where h.heat_no = ? and d.deleted_at is null order by d.id limit 1",
      heatNo,
    ).id as number;
    const bulk = await process_
      .post("/api/causes/bulk")
      .set("Origin", O())
      .send({ selection: { kind: "defects", ids: [live] }, tags: ["tundish-change"], confidence: "suspected" });
    expect(bulk.status).toBe(201);

    const internal = ((await claims.get(`/api/heats/${heatNo}/history`)).body.audit as { what: string }[]).map((a) => a.what);
    expect(internal).toContain(`Logged DEP on slab ${slab}, severity 2`);
    expect(internal).toContain(`Deleted the entry DEP on slab ${slab}`);
    // A tagging from a list of defects names no heat it did not come from.
    expect(internal).toContain("Tagged 1 defect chosen on a list at once with Tundish change (suspected): 1 tagging written");

    const customer = await claims.get(`/api/heats/${heatNo}/history?edition=customer&claim=${claimId}&sections=slabs,defects,causes,audit`);
    const said = (customer.body.audit as { what: string }[]).map((a) => a.what);
    expect(said.length).toBeGreaterThan(0);
    expect(said.filter((w) => w.startsWith("Deleted the entry"))).toEqual([]);
    const loggedThere = (ws: string[]) => ws.filter((w) => w === `Logged DEP on slab ${slab}, severity 2`).length;
    expect(loggedThere(said)).toBe(loggedThere(internal) - 1);
  });
});
