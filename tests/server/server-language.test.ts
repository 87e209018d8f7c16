import ExcelJS from "exceljs";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import deSchema from "../../shared/i18n/locales/de/schema.json";
import { createTestApp, type TestApp } from "../helpers/test-app";

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
const binary = (res: request.Response, cb: (err: Error | null, body: Buffer) => void) => {
  const chunks: Buffer[] = [];
  res.on("data", (c: Buffer) => chunks.push(c));
  res.on("end", () => cb(null, Buffer.concat(chunks)));
};
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
      const german = one("select * from mail_received where envelope_to = 'process@demo.test' order by id desc limit 1");
      expect(german.subject).toBe("Ihr Strandsight-Passwort zurücksetzen");
      expect(german.text_body).toContain("Wählen Sie hier ein neues Passwort (der Link ist eine Stunde gültig):");
      expect(german.text_body).toContain("Diese Nachricht wurde automatisch versendet; Antworten werden nicht gelesen.");
      const english = one("select * from mail_received where envelope_to = 'inspector@demo.test' order by id desc limit 1");
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
