/**
 * Customer claims: the record, its link to slabs (through the coil/plate trace or by search) and so
 * to heats, attachments, and the heat history workbook e-mailed from it. Every change is audited.
 */
import type Database from "better-sqlite3";
import { prepared } from "../db/prepared";
import type { z } from "zod";
import type { Claim, ClaimSummary, claimCreateSchema, claimLinkSchema, claimQuerySchema, claimUpdateSchema } from "@shared/api/claims";
import type { Db } from "../db/client";
import { badRequest, conflict, notFound, said } from "../lib/http-error";
import { translator } from "../lib/i18n";
import { currentLanguage } from "../lib/words";
import { recordAudit } from "./audit.service";

type Row = Record<string, any>;
interface Actor {
  id: string;
}
const iso = (ms: number | null | undefined) => (ms == null ? null : new Date(ms).toISOString());
const splitIds = (s: string | null | undefined) =>
  s
    ? s
        .split(",")
        .map((x) => x.trim())
        .filter(Boolean)
    : [];
const norm = (ids: string[]) => [...new Set(ids.map((x) => x.trim().toUpperCase()).filter(Boolean))];

function loadClaim(sqlite: Database.Database, id: number): Row {
  const c = sqlite.prepare("select * from claims where id = ?").get(id) as Row | undefined;
  if (!c) throw notFound(said("claims.noClaim"));
  return c;
}

/** Slab row ids the products trace to, and the product ids the trace does not know. */
function traced(sqlite: Database.Database, productIds: string[]) {
  const found = new Map<string, number>();
  for (const p of productIds) {
    const slab = sqlite.prepare("select slab_id from products where product_id = ?").pluck().get(p) as number | undefined;
    if (slab !== undefined) found.set(p, slab);
  }
  return { slabs: [...new Set(found.values())], unknown: productIds.filter((p) => !found.has(p)) };
}

function link(sqlite: Database.Database, claimId: number, slabIds: number[], via: "trace" | "search", user: Actor) {
  const ins = sqlite.prepare("insert or ignore into claim_slabs (claim_id, slab_id, linked_via, linked_by, linked_at) values (?, ?, ?, ?, ?)");
  let added = 0;
  for (const s of slabIds) added += ins.run(claimId, s, via, user.id, Date.now()).changes;
  return added;
}

const SUMMARY = `select c.*, (select count(*) from claim_slabs cs where cs.claim_id = c.id) as nSlabs,
    (select group_concat(distinct h.heat_no) from claim_slabs cs join slabs s on s.id = cs.slab_id join heats h on h.id = s.heat_id where cs.claim_id = c.id) as heatList
  from claims c`;

const toSummary = (r: Row): ClaimSummary => ({
  id: r.id,
  claimNo: r.claim_no,
  customer: r.customer,
  productIds: splitIds(r.product_ids),
  receivedOn: r.received_on,
  defectComplained: r.defect_complained,
  quantityT: r.quantity_t ?? null,
  status: r.status,
  slabs: r.nSlabs,
  heats: r.heatList ? String(r.heatList).split(",").sort() : [],
});

export function listClaims(db: Db, q: z.output<typeof claimQuerySchema>): ClaimSummary[] {
  const where: string[] = [];
  const params: Record<string, unknown> = {};
  if (q.status) (where.push("c.status = @status"), (params.status = q.status));
  if (q.q) {
    where.push(
      `(c.claim_no like @q escape '\\' or c.customer like @q escape '\\' or c.product_ids like @q escape '\\' or c.defect_complained like @q escape '\\')`,
    );
    params.q = `%${q.q.replace(/[\\%_]/g, (ch) => `\\${ch}`)}%`;
  }
  return (
    db.$client.prepare(`${SUMMARY} ${where.length ? `where ${where.join(" and ")}` : ""} order by c.received_on desc, c.id desc limit 500`).all(params) as Row[]
  ).map(toSummary);
}

export function getClaim(db: Db, id: number): Claim {
  const sqlite = db.$client;
  const r = sqlite.prepare(`${SUMMARY} where c.id = ?`).get(id) as Row | undefined;
  if (!r) throw notFound(said("claims.noClaim"));
  const slabs = sqlite
    .prepare(
      `select s.id, s.slab_id, h.heat_no, q.sequence_no, g.code as grade, s.disposition, cs.linked_via, cs.linked_at,
         (select count(*) from defects d where d.slab_id = s.id and d.deleted_at is null) as nDefects
       from claim_slabs cs join slabs s on s.id = cs.slab_id join heats h on h.id = s.heat_id left join sequences q on q.id = h.sequence_id join grades g on g.id = h.grade_id
       where cs.claim_id = ? order by h.cast_start, s.slab_id`,
    )
    .all(id) as Row[];
  const products = splitIds(r.product_ids).map((p) => p.toUpperCase());
  const productSlab = new Map<string, number>();
  for (const p of products) {
    const s = sqlite.prepare("select slab_id from products where product_id = ?").pluck().get(p) as number | undefined;
    if (s !== undefined) productSlab.set(p, s);
  }
  const attachments = sqlite
    .prepare(
      "select a.*, u.name as byName from attachments a left join user u on u.id = a.created_by where owner_kind = 'claim' and owner_id = ? order by a.created_at",
    )
    .all(id) as Row[];
  const history = sqlite
    .prepare(
      "select a.at, coalesce(a.user_name, u.name, a.actor) as byName, a.action, a.after from audit_log a left join user u on u.id = a.user_id where a.entity = 'claim' and a.entity_id = ? order by a.at, a.id",
    )
    .all(String(id)) as Row[];
  const creator = r.created_by
    ? (sqlite.prepare("select id, name from user where id = ?").get(r.created_by) as { id: string; name: string } | undefined)
    : undefined;
  return {
    ...toSummary(r),
    notes: r.notes ?? null,
    createdBy: creator ?? null,
    createdAt: iso(r.created_at)!,
    linkedSlabs: slabs.map((s) => ({
      slabId: s.slab_id,
      heatNo: s.heat_no,
      sequenceNo: s.sequence_no ?? null,
      grade: s.grade,
      disposition: s.disposition ?? null,
      defects: s.nDefects,
      linkedVia: s.linked_via,
      linkedAt: iso(s.linked_at)!,
      products: products.filter((p) => productSlab.get(p) === s.id),
    })),
    untracedProducts: products.filter((p) => !productSlab.has(p)),
    attachments: attachments.map((a) => ({
      id: a.id,
      fileName: a.file_name,
      mime: a.mime,
      bytes: a.bytes,
      url: `/api/attachments/${a.id}`,
      at: iso(a.created_at)!,
      by: a.byName ?? null,
    })),
    history: history.map((h) => ({
      at: iso(h.at)!,
      by: h.byName ?? null,
      action: h.action,
      detail: describe(h.action, h.after, (id) => mailState(sqlite, id)),
    })),
  };
}

/** Where an e-mail of the outbox stands (null when the row is gone). */
function mailState(sqlite: Database.Database, id: unknown) {
  if (typeof id !== "number") return null;
  return (
    prepared<[number], { status: string; sentAt: number | null }>(sqlite, "select status, sent_at as sentAt from email_outbox where id = ?").get(id) ?? null
  );
}

const mailTime = (ms: number) => new Date(ms).toISOString().slice(0, 16).replace("T", " ") + " UTC";

/**
 * A history line in words, made when the claim is read (the audit row keeps only the facts), in the
 * reader's language (audit:claimHistory.*), a status by its name as the screens say it ("Status → Under review").
 */
function describe(action: string, after: unknown, mail: (outboxId: unknown) => { status: string; sentAt: number | null } | null): string | null {
  const a = (typeof after === "string" ? JSON.parse(after) : after) as Record<string, any> | null;
  if (!a) return null;
  const t = translator(currentLanguage());
  if (action === "claim.history.sent") {
    // Said as it stands in the outbox: queued until the mail server has taken it.
    const to = (a.to as string[]).join(", ");
    const m = mail(a.outboxId);
    // Sendings before the two editions carried no edition: they were the whole (internal) history.
    const edition = a.edition === "customer" ? "customer" : "internal";
    const values = { heat: a.heatNo as string, to };
    if (m?.status === "sent")
      return m.sentAt ? t(`audit:claimHistory.${edition}.sentAt`, { ...values, at: mailTime(m.sentAt) }) : t(`audit:claimHistory.${edition}.sent`, values);
    if (m?.status === "failed") return t(`audit:claimHistory.${edition}.failed`, values);
    return t(`audit:claimHistory.${edition}.queued`, values);
  }
  if (action === "claim.update" && a.status) {
    const status = a.status as string;
    return t("audit:claimHistory.status", { status: t(`common:terms.claimStatus.${status}`, { defaultValue: status }) });
  }
  if (action === "claim.slabs.link") return t("audit:claimHistory.slabsLinked", { count: a.added as number });
  if (action === "claim.slabs.unlink") return t("audit:claimHistory.slabUnlinked", { slab: a.slabId as string });
  return null;
}

export function createClaim(db: Db, user: Actor, input: z.output<typeof claimCreateSchema>): Claim {
  const sqlite = db.$client;
  const id = db.transaction(() => {
    const claimNo = input.claimNo.trim().toUpperCase();
    if (sqlite.prepare("select 1 from claims where claim_no = ?").get(claimNo)) throw conflict(said("claims.exists", { claim: claimNo }), { field: "claimNo" });
    const products = norm(input.productIds);
    const now = Date.now();
    const cid = Number(
      sqlite
        .prepare(
          "insert into claims (claim_no, customer, product_ids, received_on, defect_complained, quantity_t, status, notes, created_by, created_at, updated_at) values (?, ?, ?, ?, ?, ?, 'new', ?, ?, ?, ?)",
        )
        .run(
          claimNo,
          input.customer,
          products.join(", "),
          input.receivedOn,
          input.defectComplained,
          input.quantityT ?? null,
          input.notes ?? null,
          user.id,
          now,
          now,
        ).lastInsertRowid,
    );
    const t = traced(sqlite, products);
    const added = input.linkTraced ? link(sqlite, cid, t.slabs, "trace", user) : 0;
    recordAudit(db, {
      userId: user.id,
      action: "claim.create",
      entity: "claim",
      entityId: cid,
      after: { ...input, claimNo, productIds: products, linked: added, untraced: t.unknown },
    });
    return cid;
  });
  return getClaim(db, id);
}

export function updateClaim(db: Db, user: Actor, id: number, input: z.output<typeof claimUpdateSchema>): Claim {
  const sqlite = db.$client;
  db.transaction(() => {
    const c = loadClaim(sqlite, id);
    const products = input.productIds ? norm(input.productIds).join(", ") : c.product_ids;
    sqlite
      .prepare(
        "update claims set customer = ?, product_ids = ?, received_on = ?, defect_complained = ?, quantity_t = ?, status = ?, notes = ?, updated_at = ? where id = ?",
      )
      .run(
        input.customer ?? c.customer,
        products,
        input.receivedOn ?? c.received_on,
        input.defectComplained ?? c.defect_complained,
        input.quantityT !== undefined ? input.quantityT : c.quantity_t,
        input.status ?? c.status,
        input.notes !== undefined ? input.notes : c.notes,
        Date.now(),
        id,
      );
    recordAudit(db, {
      userId: user.id,
      action: "claim.update",
      entity: "claim",
      entityId: id,
      before: { customer: c.customer, productIds: c.product_ids, status: c.status, notes: c.notes, quantityT: c.quantity_t },
      after: input,
    });
  });
  return getClaim(db, id);
}

export function linkSlabs(db: Db, user: Actor, id: number, input: z.output<typeof claimLinkSchema>): Claim {
  const sqlite = db.$client;
  db.transaction(() => {
    loadClaim(sqlite, id);
    const slabCodes = norm(input.slabIds);
    const rows = slabCodes.map((s) => [s, sqlite.prepare("select id from slabs where slab_id = ?").pluck().get(s) as number | undefined] as const);
    const missing = rows.filter(([, r]) => r === undefined).map(([s]) => s);
    const t = traced(sqlite, norm(input.productIds));
    if (missing.length || t.unknown.length) {
      throw badRequest(
        [
          ...(missing.length ? [said("claims.noSlabs", { slabs: missing.join(", ") })] : []),
          ...(t.unknown.length ? [said("claims.untraced", { products: t.unknown.join(", ") })] : []),
        ],
        { missingSlabs: missing, untracedProducts: t.unknown },
        "unknown_ids",
      );
    }
    const added =
      link(
        sqlite,
        id,
        rows.map(([, r]) => r!),
        "search",
        user,
      ) + link(sqlite, id, t.slabs, "trace", user);
    recordAudit(db, { userId: user.id, action: "claim.slabs.link", entity: "claim", entityId: id, after: { ...input, added } });
  });
  return getClaim(db, id);
}

export function unlinkSlab(db: Db, user: Actor, id: number, slabCode: string): Claim {
  const sqlite = db.$client;
  db.transaction(() => {
    loadClaim(sqlite, id);
    const r = sqlite
      .prepare("delete from claim_slabs where claim_id = ? and slab_id = (select id from slabs where slab_id = ?)")
      .run(id, slabCode.trim().toUpperCase());
    if (r.changes === 0) throw notFound(said("claims.slabNotLinked", { slab: slabCode }));
    recordAudit(db, { userId: user.id, action: "claim.slabs.unlink", entity: "claim", entityId: id, after: { slabId: slabCode.trim().toUpperCase() } });
  });
  return getClaim(db, id);
}

export function claimExists(db: Db, id: number) {
  return loadClaim(db.$client, id);
}

/** The heat must be one the claim is linked to (through its slabs): a claim sends its own evidence. */
export function checkHeatOfClaim(db: Db, id: number, heatNo: string) {
  const ok = db.$client
    .prepare("select 1 from claim_slabs cs join slabs s on s.id = cs.slab_id join heats h on h.id = s.heat_id where cs.claim_id = ? and h.heat_no = ?")
    .get(id, heatNo.trim().toUpperCase());
  if (!ok) throw badRequest(said("claims.heatNotLinked", { heat: heatNo }), { field: "heatNo" }, "heat_not_linked");
}
