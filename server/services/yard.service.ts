import crypto from "node:crypto";
import { eq } from "drizzle-orm";
import {
  YARD_MINE_DAYS,
  YARD_MINE_MAX,
  YARD_SYNC_MAX_SLABS,
  YARD_UNINSPECTED_MAX_DAYS,
  YARD_WINDOW_DEFAULT_HOURS,
  yardSettingsSchema,
  type YardSettings,
  type YardSlab,
  type YardSync,
} from "@shared/api/yard";
import type { Db } from "../db/client";
import { plantSettings } from "../db/schema";
import { notFound, said } from "../lib/http-error";
import { recordAudit } from "./audit.service";
import { getCatalogue } from "./catalogue.service";
import { topRiskOfSlabs } from "./risk/risk.service";
import { listDefects } from "./defects.service";

type Actor = NonNullable<Express.Request["user"]>;
type Row = Record<string, any>;

const HOUR = 3_600_000;
const DAY = 24 * HOUR;
const iso = (ms: number | null | undefined) => (ms == null ? null : new Date(ms).toISOString());

/** Where the yard's settings live beside the formula settings (plant_settings, one key per group). */
export const YARD_SETTINGS_KEY = "yard.tablets";

export function getYardSettings(db: Pick<Db, "select">): YardSettings {
  const row = db.select().from(plantSettings).where(eq(plantSettings.key, YARD_SETTINGS_KEY)).get();
  // A stored value that no longer passes (an older rule, a hand edit) falls back to the default.
  const parsed = yardSettingsSchema.safeParse(row?.value);
  return parsed.success ? parsed.data : { syncWindowHours: YARD_WINDOW_DEFAULT_HOURS };
}

export function updateYardSettings(db: Db, next: YardSettings, userId: string): YardSettings {
  return db.transaction((tx) => {
    const before = getYardSettings(tx);
    const exists = tx.select({ key: plantSettings.key }).from(plantSettings).where(eq(plantSettings.key, YARD_SETTINGS_KEY)).get();
    if (exists) tx.update(plantSettings).set({ value: next, updatedAt: new Date(), updatedBy: userId }).where(eq(plantSettings.key, YARD_SETTINGS_KEY)).run();
    else tx.insert(plantSettings).values({ key: YARD_SETTINGS_KEY, value: next, updatedBy: userId }).run();
    recordAudit(tx, { userId, action: "settings.update", entity: "plant_settings", entityId: "yard", before, after: next });
    return getYardSettings(tx);
  });
}

const SLAB_COLUMNS = `s.id, s.slab_id as slabId, h.heat_no as heatNo, g.code as gradeCode, st.strand_no as strandNo, s.piece_no as pieceNo,
    s.length_mm as lengthMm, s.width_mm as widthMm, s.thickness_mm as thicknessMm, s.weight_t as weightT, s.cast_at as castAt,
    s.transition, s.disposition,
    (select count(*) from defects d where d.slab_id = s.id and d.deleted_at is null) as defects,
    (select n.slab_id from slabs n where n.heat_id = s.heat_id and n.strand_id = s.strand_id and n.piece_no > s.piece_no
       order by n.piece_no limit 1) as nextPieceId`;
const SLAB_JOINS = "join heats h on h.id = s.heat_id join grades g on g.id = h.grade_id join strands st on st.id = s.strand_id";
const LIVE_ENTRY = "exists (select 1 from defects d where d.slab_id = s.id and d.deleted_at is null)";
const ROLLED = "exists (select 1 from products p where p.slab_id = s.id)";

/** The slabs' coils and plates, by slab row id. */
function productsOf(db: Db, slabRowIds: number[]) {
  const map = new Map<number, YardSlab["products"]>();
  if (slabRowIds.length === 0) return map;
  const rows = db.$client
    .prepare(
      `select p.slab_id as slab, p.product_id as productId, p.kind, p.rolled_at as rolledAt from products p
       where p.slab_id in (select value from json_each(?)) order by p.rolled_at, p.id`,
    )
    .all(JSON.stringify(slabRowIds)) as Row[];
  for (const r of rows) {
    const list = map.get(r.slab) ?? [];
    list.push({ productId: r.productId, kind: r.kind, rolledAt: iso(r.rolledAt) });
    map.set(r.slab, list);
  }
  return map;
}

function toYardSlabs(db: Db, rows: Row[]): YardSlab[] {
  const products = productsOf(
    db,
    rows.map((r) => r.id as number),
  );
  const risks = topRiskOfSlabs(
    db,
    rows.map((r) => r.id as number),
  );
  return rows.map((r) => {
    const made = products.get(r.id) ?? [];
    return {
      slabId: r.slabId,
      heatNo: r.heatNo,
      gradeCode: r.gradeCode,
      strandNo: r.strandNo,
      pieceNo: r.pieceNo,
      lengthMm: r.lengthMm,
      widthMm: r.widthMm,
      thicknessMm: r.thicknessMm,
      weightT: r.weightT,
      castAt: iso(r.castAt),
      transition: Boolean(r.transition),
      disposition: r.disposition ?? null,
      defects: r.defects,
      uninspected: r.defects === 0 && made.length === 0,
      products: made,
      nextPieceId: r.nextPieceId ?? null,
      risk: risks.get(r.id) ?? null,
    };
  });
}

/**
 * The tablet's set: every slab cast in the last `windowHours` (the plant setting) and every slab
 * still uninspected cast in the last YARD_UNINSPECTED_MAX_DAYS, newest first and at most
 * YARD_SYNC_MAX_SLABS (the rest counted); the catalogue; the caller's own entries of the last days.
 * Both slab scans run on the cast-time index, so the work is bounded by the window, not the plant.
 */
export function yardSyncSet(db: Db, user: Actor, now = Date.now()): YardSync {
  const { syncWindowHours } = getYardSettings(db);
  const params = { from: now - syncWindowHours * HOUR, horizon: now - YARD_UNINSPECTED_MAX_DAYS * DAY, cap: YARD_SYNC_MAX_SLABS };
  // One range of the cast-time index (the window lies inside the horizon), walked backwards for the
  // newest: a union of the two sets made SQLite scan the whole slab table twice (0.4 s at 1 M slabs).
  const picked = `s.cast_at >= @horizon and (s.cast_at >= @from or (not ${LIVE_ENTRY} and not ${ROLLED}))`;
  const c = db.$client;
  const matched = c.prepare(`select count(*) from slabs s where ${picked}`).pluck().get(params) as number;
  // The newest ids first, then their rows: CROSS JOIN keeps SQLite's join order (left to right);
  // left to itself it started from the strands and sorted the whole 90 days (0.2 s at 1 M slabs).
  const rows = c
    .prepare(
      `select ${SLAB_COLUMNS} from (select s.id from slabs s where ${picked} order by s.cast_at desc, s.id desc limit @cap) k
       cross join slabs s on s.id = k.id cross join heats h on h.id = s.heat_id cross join grades g on g.id = h.grade_id
       cross join strands st on st.id = s.strand_id order by s.cast_at desc, s.id desc`,
    )
    .all(params) as Row[];
  const mine = listDefects(db, user, {
    mine: true,
    from: new Date(now - YARD_MINE_DAYS * DAY).toISOString(),
    to: undefined,
    slab: undefined,
    heat: undefined,
    type: undefined,
    reviewStatus: undefined,
    sort: "newest",
    page: 1,
    pageSize: YARD_MINE_MAX,
  }).items;
  return {
    windowHours: syncWindowHours,
    uninspectedMaxDays: YARD_UNINSPECTED_MAX_DAYS,
    slabs: toYardSlabs(db, rows),
    matched,
    leftOut: Math.max(0, matched - rows.length),
    catalogue: getCatalogue(db, user.id, false),
    mineDays: YARD_MINE_DAYS,
    mine,
  };
}

/** One slab as the set carries it, for a slab the tablet does not hold (opened online). */
export function yardSlab(db: Db, slabId: string): YardSlab {
  const id = slabId.trim().toUpperCase();
  const row = db.$client.prepare(`select ${SLAB_COLUMNS} from slabs s ${SLAB_JOINS} where s.slab_id = ?`).get(id) as Row | undefined;
  if (!row) throw notFound(said("defects.noSlab", { slab: id }));
  return toYardSlabs(db, [row])[0]!;
}

/**
 * A strong validator of the answer's bytes: a tablet that holds the same set gets 304 and nothing
 * else crosses the yard's Wi-Fi. Hashing the text (not a change counter) cannot go stale: a slab that
 * leaves the window, a new entry or a renamed defect type all change it.
 */
export function etagOf(text: string): string {
  // Weak: the same set goes gzipped or plain, byte-different but the same content.
  return `W/"${crypto.createHash("sha256").update(text).digest("base64url").slice(0, 32)}"`;
}

/** If-None-Match holds this tag (or "*"): the client's copy is current. */
export function clientHasCurrent(ifNoneMatch: string | undefined, etag: string): boolean {
  if (!ifNoneMatch) return false;
  // Bounded: a header of many tags is read only as far as its first 50.
  return ifNoneMatch
    .split(",")
    .slice(0, 50)
    .map((t) => t.trim().replace(/^W\//, ""))
    .some((t) => t === etag.replace(/^W\//, "") || t === "*");
}
