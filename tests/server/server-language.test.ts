import crypto from "node:crypto";
import ExcelJS from "exceljs";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import deSchema from "../../shared/i18n/locales/de/schema.json";
import { STREAM_FROM_BYTES } from "../../server/import/sheet-reader";
import { createTestApp, type TestApp } from "../helpers/test-app";
import { binaryBody as binary } from "../helpers/workbooks";

/**
 * The server's own words in the reader's language: refusals in the requester's language (their
 * choice, else their browser's, else English), e-mails in the recipient's, workbooks in the asker's.
 */
let t: TestApp;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.01, fakeSmtp: true });
});
afterAll(() => t?.close());

const O = () => t.env.BETTER_AUTH_URL;
const one = (sql: string, ...a: unknown[]) => t.db.$client.prepare(sql).get(...a) as Record<string, any>;
const speaks = async (agent: Awaited<ReturnType<TestApp["agentFor"]>>, language: "de" | null) =>
  expect((await agent.put("/api/me/language").set("Origin", O()).send({ language })).status).toBe(200);

describe("the server's words in the reader's language", () => {
  it("when a German user is refused, then the message is German, while an English user reads the same refusal word for word as before", async () => {
    const inspector = await t.agentFor("inspector");
    const claims = await t.agentFor("claims");
    await speaks(inspector, "de");
    try {
      // A role refusal names the roles in the reader's words.
      const german = await inspector.get("/api/admin/outbox").set("Accept-Language", "en-GB");
      expect(german.status).toBe(403);
      expect(german.body.error).toMatchObject({ code: "forbidden", message: "Ihre Rolle erlaubt dies nicht. Zugelassen sind: Administrator." });
      const english = await claims.get("/api/admin/outbox");
      expect(english.status).toBe(403);
      expect(english.body.error).toMatchObject({ code: "forbidden", message: "Your role does not allow this. It is open to: Administrator." });

      // Not found, with the requested id in the sentence.
      const missing = await inspector.get("/api/heats/NO-SUCH-HEAT");
      expect(missing.status).toBe(404);
      expect(missing.body.error.message).toBe("Eine Schmelze NO-SUCH-HEAT gibt es nicht.");
      expect((await claims.get("/api/heats/NO-SUCH-HEAT")).body.error.message).toBe("There is no heat NO-SUCH-HEAT.");

      // The handler's own words for a request no route answers.
      expect((await inspector.get("/api/no-such-thing")).body.error.message).toBe("Es gibt keine API-Route GET /api/no-such-thing.");
      expect((await claims.get("/api/no-such-thing")).body.error.message).toBe("There is no API route GET /api/no-such-thing.");
    } finally {
      await speaks(inspector, null);
    }
  });

  it("when someone signed out is refused, then the first language of Accept-Language we have is used, else English", async () => {
    const de = await request(t.app).get("/api/heats").set("Accept-Language", "de-AT,de;q=0.9,en;q=0.5");
    expect(de.status).toBe(401);
    expect(de.body.error).toEqual({ code: "unauthenticated", message: "Bitte melden Sie sich an, um fortzufahren." });
    const frThenDe = await request(t.app).get("/api/heats").set("Accept-Language", "fr-FR, de;q=0.8");
    expect(frThenDe.body.error.message).toBe("Bitte melden Sie sich an, um fortzufahren.");
    expect((await request(t.app).get("/api/heats").set("Accept-Language", "fr-FR")).body.error.message).toBe("Please sign in to continue.");
    expect((await request(t.app).get("/api/heats")).body.error.message).toBe("Please sign in to continue.");
  });

  it("when a German user sends a malformed body, then the handler's refusal is German", async () => {
    const quality = await t.agentFor("quality");
    await speaks(quality, "de");
    try {
      const res = await quality.put("/api/me/language").set("Origin", O()).set("Content-Type", "application/json").send("{not json");
      expect(res.status).toBe(400);
      expect(res.body.error).toEqual({ code: "invalid_json", message: "Der Inhalt der Anfrage ist kein gültiges JSON." });
    } finally {
      await speaks(quality, null);
    }
  });

  it("when a German user's entry fails the shared schema, then the refusal says the schema's message in German; in English as written", async () => {
    const inspector = await t.agentFor("inspector");
    const entry = {
      slab_id: "  ",
      type_code: "LFC",
      face: "inner",
      position_along_mm: 1200,
      position_across_mm: 600,
      severity: 2,
      stage: "slab_yard",
      disposition: "hold",
      client_key: "server-language-1",
    };
    await speaks(inspector, "de");
    try {
      const german = await inspector.post("/api/defects").set("Origin", O()).send(entry);
      expect(german.status).toBe(400);
      expect(german.body.error.code).toBe("validation_failed");
      expect(german.body.error.message).toBe(`slab_id: ${(deSchema as Record<string, string>)["Give the slab id."]}`);
      expect(german.body.error.message).not.toContain("Give the slab id.");
    } finally {
      await speaks(inspector, null);
    }
    // The same refusal once the inspector has no language again (and the browser names none): English as written.
    const english = await inspector.post("/api/defects").set("Origin", O()).send(entry);
    expect(english.status).toBe(400);
    expect(english.body.error.message).toBe("slab_id: Give the slab id.");
  });

  it("when a German recipient gets a reset link, then its subject and body are German; an English recipient's stay English", async () => {
    const process = await t.agentFor("process");
    await speaks(process, "de");
    try {
      const ask = (email: string) => request(t.app).post("/api/auth/request-password-reset").set("Origin", O()).send({ email, redirectTo: "/reset-password" });
      expect((await ask("process@demo.test")).status).toBe(200);
      expect((await ask("inspector@demo.test")).status).toBe(200);
      await t.mailer.processDue();
      // The reset mail (the one with the link): the demo plant's action due 2026-11-20 is overdue by
      // now, and its reminder to the process engineer may go out in the same run, after it.
      const german = one("select * from mail_received where envelope_to = 'process@demo.test' and text_body like '%reset-password%' order by id desc limit 1");
      expect(german.subject).toBe("Ihr Strandsight-Passwort zurücksetzen");
      expect(german.text_body).toContain("Wählen Sie hier ein neues Passwort (der Link ist eine Stunde gültig):");
      expect(german.text_body).toContain("Diese Nachricht wurde automatisch versendet; Antworten werden nicht gelesen.");
      const english = one(
        "select * from mail_received where envelope_to = 'inspector@demo.test' and text_body like '%reset-password%' order by id desc limit 1",
      );
      expect(english.subject).toBe("Reset your Strandsight password");
      expect(english.text_body).toContain("This message was sent automatically; replies are not read.");
    } finally {
      await speaks(process, null);
    }
  });

  it("when a critical defect is logged and the quality engineer reads German, then the notice's subject and words are German, the plant's names as they are", async () => {
    const quality = await t.agentFor("quality");
    const inspector = await t.agentFor("inspector");
    await speaks(quality, "de");
    try {
      const slab = one("select slab_id from slabs order by id limit 1 offset 5").slab_id as string;
      const res = await inspector.post("/api/defects").set("Origin", O()).send({
        slab_id: slab,
        type_code: "LFC",
        face: "inner",
        position_along_mm: 900,
        position_across_mm: 300,
        severity: 4,
        stage: "slab_yard",
        disposition: "hold",
        client_key: "server-language-critical",
      });
      expect(res.status).toBe(201);
      await t.mailer.processDue();
      const received = one("select * from mail_received where envelope_to = 'quality@demo.test' order by id desc limit 1");
      expect(received.subject).toBe(`Kritischer Fehler an Bramme ${slab}: LFC Longitudinal facial crack`);
      expect(received.text_body).toContain("LFC Longitudinal facial crack, Innenbogenseite (oben), 900 mm vom Kopfende");
      expect(received.text_body).toContain("Ein Fehler der Schwere 4 (Kritisch) wurde erfasst.");
    } finally {
      await speaks(quality, null);
    }
  });

  it("when a German user exports a heat history, then its sheet names and header rows are German and its numbers and dates stay numbers and dates", async () => {
    const claims = await t.agentFor("claims");
    await speaks(claims, "de");
    try {
      const heatNo = one("select h.heat_no from heats h join slabs s on s.heat_id = h.id order by h.id limit 1").heat_no as string;
      const res = await claims.get(`/api/heats/${heatNo}/history.xlsx`).buffer(true).parse(binary);
      expect(res.status).toBe(200);
      const wb = new ExcelJS.Workbook();
      await wb.xlsx.load(res.body as never);
      expect(wb.getWorksheet("Übersicht")).toBeDefined();
      const slabs = wb.getWorksheet("Brammen")!;
      expect(slabs).toBeDefined();
      expect((slabs.getRow(1).values as unknown[]).slice(1, 9)).toEqual([
        "Bramme",
        "Strang",
        "Stück",
        "Länge (mm)",
        "Breite (mm)",
        "Dicke (mm)",
        "Gewicht (t)",
        "Gegossen (UTC)",
      ]);
      const row = slabs.getRow(2);
      expect(typeof row.getCell(4).value).toBe("number");
      expect(row.getCell(4).numFmt).toBe("#,##0");
      expect(typeof row.getCell(7).value).toBe("number");
      expect(row.getCell(8).value).toBeInstanceOf(Date);
    } finally {
      await speaks(claims, null);
    }
  });

  it("when a German user exports a report, then its sheets and headers are German with numbers kept as numbers", async () => {
    const quality = await t.agentFor("quality");
    await speaks(quality, "de");
    try {
      const res = await quality.get("/api/reports/overview.xlsx?period=day").buffer(true).parse(binary);
      expect(res.status).toBe(200);
      const wb = new ExcelJS.Workbook();
      await wb.xlsx.load(res.body as never);
      const params = wb.getWorksheet("Kenngrößen")!;
      expect(params.getRow(1).getCell(1).value).toBe("Kenngröße");
      expect(params.getRow(2).getCell(1).value).toBe("Bericht");
      expect(params.getRow(2).getCell(2).value).toBe("Übersicht");
      const byPeriod = wb.getWorksheet("Nach Zeitraum")!;
      expect((byPeriod.getRow(1).values as unknown[]).slice(1, 4)).toEqual(["Zeitraum", "Brammen", "Betroffene Brammen"]);
      expect(typeof byPeriod.getRow(2).getCell(2).value).toBe("number");
      expect(byPeriod.getRow(2).getCell(4).numFmt).toBe("0.00%");
    } finally {
      await speaks(quality, null);
    }
    // The same export for an English reader keeps its English names.
    const english = await (await t.agentFor("quality")).get("/api/reports/overview.xlsx?period=day").buffer(true).parse(binary);
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(english.body as never);
    expect(wb.getWorksheet("Parameters")!.getRow(2).values).toEqual([undefined, "Report", "Overview"]);
    expect(wb.getWorksheet("By period")).toBeDefined();
  });

  const workbookOf = async (agent: Awaited<ReturnType<TestApp["agentFor"]>>, url: string) => {
    const res = await agent.get(url).buffer(true).parse(binary);
    expect(res.status).toBe(200);
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(res.body as never);
    return wb;
  };
  /** Column `col` of a sheet, from row 2 down (the header row left out). */
  const column = (ws: ExcelJS.Worksheet | undefined, col: number) => {
    expect(ws).toBeDefined();
    const out: unknown[] = [];
    ws!.eachRow((row, i) => void (i > 1 && out.push(row.getCell(col).value)));
    return out;
  };

  it("when a German user exports the adjusted model and a before-after within grade families, then the item labels and words in the cells are German, numbers still numbers; English word for word as before", async () => {
    const adjusted = "/api/reports/adjusted.xlsx?defectType=SLG&variables=casting_speed_m_min,mold_level_sd_mm&adjustFor=grade_family";
    const beforeAfter =
      "/api/reports/before-after.xlsx?mode=variable&variable=casting_speed_m_min&aMin=1&aMax=1.5&bMin=1.51&bMax=2&defectType=SLG&stratifyBy=grade_family";
    const quality = await t.agentFor("quality");
    await speaks(quality, "de");
    try {
      const adj = await workbookOf(quality, adjusted);
      const model = adj.getWorksheet("Modell");
      expect(column(model, 1).slice(0, 7)).toEqual([
        "Brammen im Modell",
        "Betroffene Brammen",
        "Schmelzen",
        "Brammen in den Filtern",
        "Ausgelassene Brammen (ein Wert fehlt)",
        "Koeffizienten (mit Achsenabschnitt)",
        "Devianz",
      ]);
      expect(typeof model!.getRow(2).getCell(2).value).toBe("number");
      expect(column(adj.getWorksheet("Testergebnisse"), 2)).toEqual(expect.arrayContaining(["untersucht", "adjustiert für"]));
      const params = adj.getWorksheet("Kenngrößen")!;
      const items = column(params, 1);
      expect(items).toContain("Fehlerart");
      expect(items).toContain("Adjustiert für");
      expect(column(params, 2)[items.indexOf("Adjustiert für")]).toBe("Güteklasse");

      const ba = await workbookOf(quality, beforeAfter);
      const pooled = ba.getWorksheet("Über Strata gepoolt");
      expect(column(pooled, 1)).toEqual([
        "Rohe Odds Ratio B gegen A (Strata nicht berücksichtigt)",
        "Mantel-Haenszel-Odds-Ratio B gegen A, innerhalb Güteklasse",
        "Breslow-Day-Test auf eine gemeinsame Odds Ratio in allen Strata",
        "Standardisierte Quote A",
        "Standardisierte Quote B",
        "Standardisierte Quote B − A",
      ]);
      expect(typeof pooled!.getRow(2).getCell(2).value).toBe("number");
      expect(String(pooled!.getRow(7).getCell(8).value)).toMatch(/^Referenzmix: /);
      expect(column(ba.getWorksheet("Kenngrößen"), 1)).toEqual(expect.arrayContaining(["Vergleich", "Vergleich innerhalb", "A von (m/min)"]));
    } finally {
      await speaks(quality, null);
    }
    const adj = await workbookOf(quality, adjusted);
    expect(column(adj.getWorksheet("Model"), 1).slice(0, 7)).toEqual([
      "Slabs in the model",
      "Affected slabs",
      "Heats",
      "Slabs in the filters",
      "Slabs left out (a value missing)",
      "Coefficients (with the intercept)",
      "Deviance",
    ]);
    const ba = await workbookOf(quality, beforeAfter);
    expect(column(ba.getWorksheet("Pooled over strata"), 1)).toEqual([
      "Crude odds ratio B against A (strata ignored)",
      "Mantel–Haenszel odds ratio B against A, within grade family",
      "Breslow–Day test of one odds ratio in every stratum",
      "Standardised rate A",
      "Standardised rate B",
      "Standardised rate B − A",
    ]);
    expect(column(ba.getWorksheet("Parameters"), 1)).toEqual(expect.arrayContaining(["Compare", "Compare within", "A from (m/min)"]));
  }, 60_000);

  it("when a German claims officer reads a claim's history, then its lines are German (the status by its German name); English as before", async () => {
    const claims = await t.agentFor("claims");
    const slabs = (t.db.$client.prepare("select slab_id from slabs order by id desc limit 2").pluck().all() as string[]).reverse();
    const created = await claims
      .post("/api/claims")
      .set("Origin", O())
      .send({ claimNo: "CL-LANG-1", customer: "Invented Buyer (demo)", receivedOn: "2026-11-28", defectComplained: "Slivers" });
    expect(created.status).toBe(201);
    const id = created.body.id as number;
    expect((await claims.post(`/api/claims/${id}/slabs`).set("Origin", O()).send({ slabIds: slabs })).status).toBe(200);
    expect((await claims.patch(`/api/claims/${id}`).set("Origin", O()).send({ status: "under_review" })).status).toBe(200);
    expect((await claims.delete(`/api/claims/${id}/slabs/${slabs[1]}`).set("Origin", O())).status).toBe(200);
    const heat = one("select h.heat_no from slabs s join heats h on h.id = s.heat_id where s.slab_id = ?", slabs[0]).heat_no as string;
    const details = (body: { history: { detail: string | null }[] }) => body.history.map((h) => h.detail).filter((d) => d !== null);
    await speaks(claims, "de");
    try {
      const sent = await claims
        .post(`/api/claims/${id}/send-history`)
        .set("Origin", O())
        .send({ heatNo: heat, to: ["buyer@example.test"], edition: "internal" });
      expect(sent.status).toBe(202);
      expect(details(sent.body.claim)).toEqual([
        "2 Brammen verknüpft",
        "Status → In Prüfung",
        `Verknüpfung mit Bramme ${slabs[1]} gelöst`,
        `Historie der Schmelze ${heat} (interne Ausgabe) für den E-Mail-Versand an buyer@example.test bereitgestellt`,
      ]);
    } finally {
      await speaks(claims, null);
    }
    expect(details((await claims.get(`/api/claims/${id}`)).body)).toEqual([
      "2 slab(s) linked",
      "Status → Under review",
      `Slab ${slabs[1]} unlinked`,
      `Heat ${heat} history (internal edition) queued for e-mail to buyer@example.test`,
    ]);
  });
});

describe("refusals made in the import, report and risk code, in the requester's language", () => {
  const workbook = async (rows: (string | number)[][]) => {
    const wb = new ExcelJS.Workbook();
    const ws = wb.addWorksheet("Heats");
    rows.forEach((r, i) => (ws.getRow(i + 1).values = r));
    return Buffer.from(await wb.xlsx.writeBuffer());
  };
  const importAs = (agent: Awaited<ReturnType<TestApp["agentFor"]>>, file: Buffer, language?: string) => {
    const req = agent.post("/api/import/heats?dryRun=true").set("Origin", O());
    if (language) req.set("Accept-Language", language);
    return req.attach("file", file, "heats.xlsx");
  };

  it("when an admin reading German imports a bad workbook, then the import thread's refusal is German, and English is word for word as before", async () => {
    const admin = await t.agentFor("admin");
    // Read whole in the import thread: a header and nothing under it.
    const headerOnly = await workbook([["heat_no", "sequence_no", "caster", "grade"]]);
    const german = await importAs(admin, headerOnly, "de");
    expect(german.status).toBe(400);
    expect(german.body.error).toMatchObject({ code: "empty_file", message: "Die Arbeitsmappe hat eine Kopfzeile, aber keine Datenzeilen." });
    const english = await importAs(admin, headerOnly);
    expect(english.body.error).toMatchObject({ code: "empty_file", message: "The workbook has a header but no data rows." });

    // A large workbook is read in a reader thread of its own: its refusal crosses two threads.
    const noise = () => crypto.randomBytes(15_000).toString("base64");
    const large = await workbook([[], ["heat_no", "note"], ...Array.from({ length: 30 }, (_, i) => [`LRG-${i}`, noise()])]);
    expect(large.length).toBeGreaterThan(STREAM_FROM_BYTES);
    const deLarge = await importAs(admin, large, "de");
    expect(deLarge.status).toBe(400);
    expect(deLarge.body.error).toMatchObject({
      code: "bad_header",
      message: "Die Kopfzeile muss in Zeile 1 des ersten Tabellenblatts stehen (gefunden in Zeile 2).",
    });
    const enLarge = await importAs(admin, large);
    expect(enLarge.body.error.message).toBe("The header must be on row 1 of the first sheet (found on row 2).");
  }, 60_000);

  it("when a German reader's workbook has bad rows, then each row error is German, in the preview and in the refusal's details; English as before", async () => {
    const admin = await t.agentFor("admin");
    const file = await workbook([
      ["heat_no", "caster", "grade", "cast_start", "casting_speed_m_min", "bogus"],
      ["ROW-DE-1", "NOPE", "NOPE", "not a date", 1.2, "x"],
    ]);
    const post = (dryRun: boolean, language?: string) => {
      const req = admin.post(`/api/import/heats${dryRun ? "?dryRun=true" : ""}`).set("Origin", O());
      if (language) req.set("Accept-Language", language);
      return req.attach("file", file, "heats.xlsx");
    };
    const messages = (errors: { message: string }[]) => errors.map((e) => e.message);
    const german = [
      "Unbekannte Spalte: bogus. Die Vorlage nennt die Schlüssel, die dieser Import annimmt.",
      "cast_start: „not a date“ ist kein Datum, das der Import liest: verwenden Sie eine Datumszelle oder schreiben Sie das Jahr zuerst, etwa 2026-11-03 14:20 (als UTC gelesen, wenn kein Versatz wie +01:00 folgt).",
      "Die Gießanlage NOPE ist nicht eingerichtet. Legen Sie sie unter Anlageneinrichtung an oder korrigieren Sie den Code.",
    ];
    const english = [
      "Unknown column: bogus. The template lists the keys this import takes.",
      "cast_start “not a date” is not a date the import reads: use a date cell, or write the date year first, such as 2026-11-03 14:20 (read as UTC unless an offset follows, such as +01:00).",
      "Caster NOPE is not set up. Add it under Plant setup, or correct the code.",
    ];
    const preview = await post(true, "de");
    expect(preview.status).toBe(200);
    expect(messages(preview.body.errors)).toEqual(expect.arrayContaining(german));
    expect(preview.body.errors[0]).toEqual({ row: 1, column: "bogus", message: german[0] });
    const refused = await post(false, "de");
    expect(refused.status).toBe(422);
    expect(refused.body.error.message).toMatch(/^\d+ Probleme gefunden; es wurde nichts importiert\./);
    expect(messages(refused.body.error.details.errors)).toEqual(expect.arrayContaining(german));

    const inEnglish = await post(true);
    expect(messages(inEnglish.body.errors)).toEqual(expect.arrayContaining(english));
    expect(inEnglish.body.errors[0]).toEqual({ row: 1, column: "bogus", message: english[0] });
    expect(messages((await post(false)).body.error.details.errors)).toEqual(expect.arrayContaining(english));
  });

  it("when an upload breaks the form's limit for a German reader, then the upload's refusal is German", async () => {
    const admin = await t.agentFor("admin");
    const file = await workbook([["heat_no"], ["H-1"]]);
    const twice = (language?: string) => {
      const req = admin.post("/api/import/heats?dryRun=true").set("Origin", O());
      if (language) req.set("Accept-Language", language);
      return req.attach("file", file, "a.xlsx").attach("file", file, "b.xlsx");
    };
    const german = await twice("de");
    expect(german.status).toBe(400);
    expect(german.body.error).toMatchObject({ code: "too_many_files", message: "Senden Sie höchstens 1 Datei auf einmal." });
    expect((await twice()).body.error.message).toBe("Send at most 1 file at once.");
  });

  it("when a German user asks a report with a bad query, then the report thread's refusal is German; English as before", async () => {
    const quality = await t.agentFor("quality");
    const reversed = "/api/reports/before-after?mode=periods&aFrom=2026-03-10&aTo=2026-03-01&bFrom=2026-04-01&bTo=2026-04-30";
    const halfBaseline = "/api/reports/control-chart?baselineFrom=2026-03-01";
    await speaks(quality, "de");
    try {
      const ba = await quality.get(reversed);
      expect(ba.status).toBe(400);
      expect(ba.body.error.message).toBe("Zeitraum A endet (2026-03-01), bevor er beginnt (2026-03-10): Geben Sie zuerst seinen ersten Tag an.");
      const cc = await quality.get(halfBaseline);
      expect(cc.status).toBe(400);
      expect(cc.body.error.message).toBe(
        "Geben Sie sowohl den ersten Tag (baselineFrom) als auch den letzten Tag (baselineTo) der Basisphase an, oder keinen von beiden.",
      );
    } finally {
      await speaks(quality, null);
    }
    expect((await quality.get(reversed)).body.error.message).toBe("Period A ends (2026-03-01) before it starts (2026-03-10): give its first day first.");
    expect((await quality.get(halfBaseline)).body.error.message).toBe(
      "Give both the first day (baselineFrom) and the last day (baselineTo) of the baseline, or neither.",
    );
  });

  it("when a refusal holds numbers, then a German reader gets them with the decimal comma and the point between thousands; English as before", async () => {
    const quality = await t.agentFor("quality");
    const overlap = "/api/reports/before-after?mode=variable&variable=casting_speed_m_min&aMin=0.9&aMax=1.25&bMin=1.2&bMax=1.6";
    const admin = await t.agentFor("admin");
    const file = await workbook([
      ["heat_no", "caster", "grade", "cast_start", "casting_speed_m_min"],
      ["NUM-DE-1", "CC1", "LC-1", "2026-11-03T14:20:00Z", 12.75],
    ]);
    const rowErrors = async (language?: string) => {
      const req = admin.post("/api/import/heats?dryRun=true").set("Origin", O());
      if (language) req.set("Accept-Language", language);
      const res = await req.attach("file", file, "heats.xlsx");
      expect(res.status).toBe(200);
      return (res.body.errors as { column: string; message: string }[]).filter((e) => e.column === "casting_speed_m_min").map((e) => e.message);
    };
    await speaks(quality, "de");
    try {
      const ba = await quality.get(overlap);
      expect(ba.status).toBe(400);
      expect(ba.body.error.message).toContain("A (0,9–1,25 m/min) und B (1,2–1,6 m/min)");
      expect(ba.body.error.message).toContain("von 1,2 bis 1,25 m/min");
    } finally {
      await speaks(quality, null);
    }
    const english = (await quality.get(overlap)).body.error.message;
    expect(english).toBe(
      "Ranges A (0.9–1.25 m/min) and B (1.2–1.6 m/min) overlap from 1.2 to 1.25 m/min: both ends of a range are included, so a slab there would count in both groups. Choose ranges that do not meet.",
    );
    // A cell beyond its column's bounds, said by the import thread.
    const [deRow] = await rowErrors("de");
    expect(deRow).toBe("casting_speed_m_min: 12,75 liegt außerhalb von 0,1–10 m/min.");
    const [enRow] = await rowErrors();
    expect(enRow).toBe("casting_speed_m_min 12.75 is outside 0.1–10 m/min.");
    // The count in a limit: 200.000 in German, 200,000 in English (the same refusal, said twice).
    const { figure, sayIn, said } = await import("../../server/lib/http-error");
    const tooMany = said("imports.fileTooManyRows", { rows: figure(200_000) });
    expect(sayIn(tooMany, "de")).toContain("200.000");
    expect(sayIn(tooMany, "en")).toContain("200,000");
  });

  it("when a German user trains a risk model for a category that does not exist, then the refusal is German; English as before", async () => {
    const quality = await t.agentFor("quality");
    const spec = { targetKind: "category", targetCode: "NO-SUCH", conditions: ["casting_speed_m_min"], categories: ["grade_family"], knots: 4 };
    await speaks(quality, "de");
    try {
      const german = await quality.post("/api/risk-models").set("Origin", O()).send(spec);
      expect(german.status).toBe(400);
      expect(german.body.error).toMatchObject({ code: "unknown_target", message: "Eine Fehlerkategorie mit dem Code NO-SUCH gibt es nicht." });
    } finally {
      await speaks(quality, null);
    }
    const english = await quality.post("/api/risk-models").set("Origin", O()).send(spec);
    expect(english.body.error).toMatchObject({ code: "unknown_target", message: "There is no defect category with the code NO-SUCH." });
  });

  it("when a German user trains a risk model on a window without judged slabs, then the training thread's 422 is German; English as before", async () => {
    const quality = await t.agentFor("quality");
    // A window long before the demo plant's first cast: not one judged slab in it.
    const spec = {
      targetKind: "type",
      targetCode: "SLG",
      conditions: ["casting_speed_m_min"],
      categories: ["grade_family"],
      knots: 4,
      from: "2001-01-01",
      to: "2001-01-31",
    };
    await speaks(quality, "de");
    try {
      const german = await quality.post("/api/risk-models").set("Origin", O()).send(spec);
      expect(german.status).toBe(422);
      expect(german.body.error).toMatchObject({
        code: "too_little_data",
        message: "Nur 0 beurteilte Brammen im Trainingszeitraum (mindestens 200 sind nötig). Erweitern Sie den Zeitraum.",
      });
    } finally {
      await speaks(quality, null);
    }
    const english = await quality.post("/api/risk-models").set("Origin", O()).send(spec);
    expect(english.status).toBe(422);
    expect(english.body.error).toMatchObject({
      code: "too_little_data",
      message: "Only 0 judged slabs in the training window (at least 200 are needed). Widen the window.",
    });
    // The failed versions keep why, each said in the reader's language on the list of models.
    const listed = async (language: string) =>
      ((await quality.get("/api/risk-models").set("Accept-Language", language)).body.items as { id: number; error: string | null }[]).filter(
        (m) => m.id === english.body.error.details.modelId,
      )[0]?.error;
    expect(await listed("de")).toBe("Nur 0 beurteilte Brammen im Trainingszeitraum (mindestens 200 sind nötig). Erweitern Sie den Zeitraum.");
    expect(await listed("en")).toBe("Only 0 judged slabs in the training window (at least 200 are needed). Widen the window.");
  }, 60_000);

  it("when a sign-in request names a link outside the app, then better-auth's refusal as our code words it is in the browser's language", async () => {
    const ask = (language?: string) => {
      const req = request(t.app).post("/api/auth/request-password-reset").set("Origin", O());
      if (language) req.set("Accept-Language", language);
      return req.send({ email: "process@demo.test", redirectTo: "https://elsewhere.example/reset" });
    };
    const german = await ask("de-DE,de;q=0.9");
    expect(german.status).toBe(403);
    expect(german.body.error.message).toBe("Dieser Link muss zurück zu einer Seite von Strandsight führen, und das tut er nicht.");
    expect((await ask()).body.error.message).toBe("This link must lead back to a page of Strandsight, and it does not.");
  });
});

describe("a thread without the catalogues' translator (the import and reader threads)", () => {
  it("when it says any refusal of the server catalogue in English, then the words are i18next's English exactly, plurals and values included", async () => {
    const { englishOf } = await import("../../server/lib/http-error");
    const { translator } = await import("../../server/lib/i18n");
    const en = (await import("../../shared/i18n/locales/en/server.json")).default as Tree;
    const t = translator("en");
    let compared = 0;
    for (const [path, text] of leavesOf(en.errors as Tree, "errors.")) {
      const key = path.replace(/_(one|other)$/, "");
      const names = [...text.matchAll(/\{\{\s*([\w.]+)\s*\}\}/g)].map((m) => m[1]!);
      for (const count of [1, 2]) {
        const values: Record<string, unknown> = Object.fromEntries(names.map((n) => [n, `‹${n}›`]));
        values.count = count;
        expect(englishOf(`server:${key}`, values), key).toBe(t(`server:${key}`, values));
        compared++;
      }
    }
    expect(compared).toBeGreaterThan(200);
    expect(englishOf("common:roles.quality")).toBe("Quality engineer");
  });
});

type Tree = { [key: string]: string | Tree };
function leavesOf(tree: Tree, prefix: string): [string, string][] {
  return Object.entries(tree).flatMap(([k, v]) => (typeof v === "string" ? [[prefix + k, v] as [string, string]] : leavesOf(v, `${prefix}${k}.`)));
}
