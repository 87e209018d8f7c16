import crypto from "node:crypto";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createTestApp, type TestApp } from "../helpers/test-app";

/**
 * API tokens of the level-2 feed carry the kinds they may send (api_tokens.scopes): the three
 * level-2 kinds unless the admin ticks otherwise, the rolling mill's products only when ticked.
 */
let t: TestApp;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.01 });
});
afterAll(() => t?.close());

const O = () => t.env.BETTER_AUTH_URL;
const n = (sql: string, ...a: unknown[]) =>
  t.db.$client
    .prepare(sql)
    .pluck()
    .get(...a) as number;
const one = (sql: string, ...a: unknown[]) => t.db.$client.prepare(sql).get(...a) as Record<string, any>;
const feed = (kind: string, token: string, body: unknown, dryRun = false) =>
  request(t.app)
    .post(`/api/ingest/${kind}${dryRun ? "?dryRun=true" : ""}`)
    .set("Authorization", `Bearer ${token}`)
    .send(body as object);

/** A slab of the demo plant and a coil rolled from it, as the rolling mill's system would send it. */
const coil = (id: string) => ({
  product_id: id,
  kind: "coil",
  slab_id: one("select slab_id from slabs order by id limit 1").slab_id as string,
  rolled_at: "2026-12-06T10:00:00Z",
  weight_t: 24.2,
});
const heat = (no: string) => ({ heat_no: no, caster: "CC2", grade: "LV-ST32", cast_start: "2026-12-05T08:00:00Z", casting_speed_m_min: 1.4 });

describe("what a feed token may send", () => {
  it("when an admin creates a token without choosing, then it may send heats, slabs and process samples, and the products feed answers 403 in words with nothing written", async () => {
    const admin = await t.agentFor("admin");
    const created = await admin.post("/api/admin/tokens").set("Origin", O()).send({ name: "Caster 2 level-2" });
    expect(created.status).toBe(201);
    expect(created.body.scopes).toEqual(["heats", "slabs", "process-samples"]);
    expect(one("select scopes from api_tokens where id = ?", created.body.id).scopes).toBe("heats,slabs,process-samples");
    const audit = one("select after from audit_log where action = 'token.create' and entity_id = ?", String(created.body.id));
    expect(JSON.parse(audit.after)).toMatchObject({ name: "Caster 2 level-2", scopes: ["heats", "slabs", "process-samples"] });
    const token = created.body.token as string;

    const heats = await feed("heats", token, [heat("TOK-H-1")], true);
    expect(heats.status).toBe(200);
    expect(heats.body).toMatchObject({ dryRun: true, valid: true, rows: 1 });

    const productsBefore = n("select count(*) from products");
    const runsBefore = n("select count(*) from import_runs");
    const refused = await feed("products", token, [coil("TC-TOK-1")]);
    expect(refused.status).toBe(403);
    expect(refused.body.error).toEqual({
      code: "token_scope",
      message:
        "This API token (“Caster 2 level-2”) may not send products (the rolling mill's coils and plates). It may send heats, slabs and process samples. An administrator can create a token that may, on the API tokens screen.",
      details: { kind: "products", scopes: ["heats", "slabs", "process-samples"] },
    });
    expect(n("select count(*) from products")).toBe(productsBefore);
    expect(n("select count(*) from products where product_id = 'TC-TOK-1'")).toBe(0);
    expect(n("select count(*) from import_runs")).toBe(runsBefore);
    // A dry run is refused the same way: the token may not even ask.
    expect((await feed("products", token, [coil("TC-TOK-1")], true)).status).toBe(403);
    // Refused before the body is read: a body that is not even JSON gets the same 403, not a parse error.
    const unread = await request(t.app)
      .post("/api/ingest/products")
      .set("Authorization", `Bearer ${token}`)
      .set("Content-Type", "application/json")
      .send("{not json");
    expect(unread.status).toBe(403);
    expect(unread.body.error.code).toBe("token_scope");
  });

  it("when an admin ticks products only, then the token may send products (stored, and listed with its scope) and its heats are refused", async () => {
    const admin = await t.agentFor("admin");
    const created = await admin
      .post("/api/admin/tokens")
      .set("Origin", O())
      .send({ name: "Rolling mill", scopes: ["products"] });
    expect(created.status).toBe(201);
    expect(created.body.scopes).toEqual(["products"]);
    const token = created.body.token as string;

    const sent = await feed("products", token, [coil("TC-TOK-2")]);
    expect(sent.status).toBe(201);
    expect(sent.body.counts).toEqual({ created: 1, updated: 0, unchanged: 0 });
    expect(one("select kind, weight_t from products where product_id = 'TC-TOK-2'")).toEqual({ kind: "coil", weight_t: 24.2 });

    const heatsBefore = n("select count(*) from heats");
    const refused = await feed("heats", token, [heat("TOK-H-2")]);
    expect(refused.status).toBe(403);
    expect(refused.body.error.message).toBe(
      "This API token (“Rolling mill”) may not send heats. It may send products (the rolling mill's coils and plates). An administrator can create a token that may, on the API tokens screen.",
    );
    expect(n("select count(*) from heats")).toBe(heatsBefore);

    const list = await admin.get("/api/admin/tokens");
    expect(list.status).toBe(200);
    const byName = Object.fromEntries((list.body.tokens as { name: string; scopes: string[] }[]).map((x) => [x.name, x.scopes]));
    expect(byName["Rolling mill"]).toEqual(["products"]);
    expect(byName["Caster 2 level-2"]).toEqual(["heats", "slabs", "process-samples"]);
  });

  it("when a token was made before tokens had scopes (stored as 'ingest'), then it keeps the three level-2 kinds and may not send products", async () => {
    const token = `ssk_${crypto.randomBytes(32).toString("base64url")}`;
    const hash = crypto.createHash("sha256").update(token).digest("hex");
    const id = Number(
      t.db.$client.prepare("insert into api_tokens (name, token_hash, prefix, scopes) values ('Old gateway', ?, ?, 'ingest')").run(hash, token.slice(0, 12))
        .lastInsertRowid,
    );

    const admin = await t.agentFor("admin");
    const listed = ((await admin.get("/api/admin/tokens")).body.tokens as { id: number; scopes: string[] }[]).find((x) => x.id === id);
    expect(listed?.scopes).toEqual(["heats", "slabs", "process-samples"]);
    expect((await feed("slabs", token, [], true)).status).toBe(400);
    expect((await feed("heats", token, [heat("TOK-H-3")], true)).body).toMatchObject({ dryRun: true, valid: true, rows: 1 });
    const refused = await feed("products", token, [coil("TC-TOK-3")]);
    expect(refused.status).toBe(403);
    expect(refused.body.error.code).toBe("token_scope");
    expect(n("select count(*) from products where product_id = 'TC-TOK-3'")).toBe(0);
  });

  it("when the admin ticks no kind, or sends one the feed does not have, then 400 in words and no token is made", async () => {
    const admin = await t.agentFor("admin");
    const before = n("select count(*) from api_tokens");
    const none = await admin.post("/api/admin/tokens").set("Origin", O()).send({ name: "Nothing ticked", scopes: [] });
    expect(none.status).toBe(400);
    expect(JSON.stringify(none.body.error)).toContain("Tick at least one kind of data the token may send.");
    const unknown = await admin
      .post("/api/admin/tokens")
      .set("Origin", O())
      .send({ name: "Too much", scopes: ["heats", "users"] });
    expect(unknown.status).toBe(400);
    expect(JSON.stringify(unknown.body.error)).toContain("A token may send heats, slabs, process-samples or products.");
    // Repeats and order do not matter: one entry per kind, in the feed's order.
    const repeated = await admin
      .post("/api/admin/tokens")
      .set("Origin", O())
      .send({ name: "Repeats", scopes: ["slabs", "heats", "slabs"] });
    expect(repeated.status).toBe(201);
    expect(repeated.body.scopes).toEqual(["heats", "slabs"]);
    expect(n("select count(*) from api_tokens")).toBe(before + 1);
  });
});
