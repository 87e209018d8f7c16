import type Database from "better-sqlite3";
import { PHOTO_MAX_PER_DEFECT, PHOTO_MAX_PER_USER_HOUR, type Defect } from "@shared/api/defects";
import type { defectCreateSchema, defectListQuerySchema, defectReviewSchema, defectUpdateSchema } from "@shared/api/defects";
import { DISPOSITION_RANK, FACE_LABELS, type Face } from "@shared/domain";
import { can } from "@shared/roles";
import type { z } from "zod";
import type { Db } from "../db/client";
import { prepared } from "../db/prepared";
import { HttpError, badRequest, conflict, forbidden, notFound, said, type Said } from "../lib/http-error";
import { causesBrief } from "./causes.service";
import { recordAudit } from "./audit.service";
import { parseDateBound } from "../lib/dates";
import { admitPhotoDecodes, checkPhoto, removePhotoFiles, storePhotoFiles, type StoredPhotoFiles } from "./photos.service";

type Actor = NonNullable<Express.Request["user"]>;
type CreateInput = z.output<typeof defectCreateSchema>;
type UpdateInput = z.output<typeof defectUpdateSchema>;
type ReviewInput = z.output<typeof defectReviewSchema>;

export interface DefectEvents {
  /** A defect was stored with critical severity (the mail issue sends it to the quality engineers). */
  criticalDefect?: (defect: Defect) => void;
}

const iso = (ms: number | null | undefined) => (ms == null ? null : new Date(ms).toISOString());

const SELECT = `select d.*, s.slab_id as slabCode, s.length_mm as slabLength, s.width_mm as slabWidth, s.thickness_mm as slabThickness,
    h.heat_no as heatNo, g.code as gradeCode, st.strand_no as strandNo, t.code as typeCode, t.name as typeName, c.code as categoryCode,
    cu.name as createdByName, ru.name as reviewedByName
  from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id join grades g on g.id = h.grade_id
  join strands st on st.id = s.strand_id join defect_types t on t.id = d.type_id join defect_categories c on c.id = t.category_id
  left join user cu on cu.id = d.created_by left join user ru on ru.id = d.reviewed_by`;

type Row = Record<string, any>;

function photosOf(sqlite: Database.Database, defectIds: number[]) {
  const map = new Map<number, Defect["photos"]>();
  if (defectIds.length === 0) return map;
  const sql = `select id, defect_id, width, height, created_at from defect_photos where deleted_at is null and defect_id in (${defectIds.map(() => "?").join(",")}) order by created_at, id`;
  // One entry (a defect's own page, a change): kept prepared; a page of a list varies in length.
  const rows = (defectIds.length === 1 ? prepared(sqlite, sql) : sqlite.prepare(sql)).all(...defectIds) as Row[];
  for (const r of rows) {
    const list = map.get(r.defect_id) ?? [];
    list.push({ id: r.id, url: `/api/photos/${r.id}`, thumbUrl: `/api/photos/${r.id}/thumb`, width: r.width, height: r.height, createdAt: iso(r.created_at)! });
    map.set(r.defect_id, list);
  }
  return map;
}

/** Own and still unreviewed for the inspector; always for quality and admin. */
export function canChange(user: Actor, row: { created_by: string | null; review_status: string }): boolean {
  if (can(user.roles, "defects.review")) return true;
  return can(user.roles, "defects.log") && row.created_by === user.id && row.review_status === "new";
}

function toDefect(r: Row, photos: Defect["photos"], user: Actor, causes: Defect["causes"] = []): Defect {
  return {
    id: r.id,
    slabId: r.slabCode,
    heatNo: r.heatNo,
    gradeCode: r.gradeCode,
    strandNo: r.strandNo,
    slabLengthMm: r.slabLength,
    slabWidthMm: r.slabWidth,
    slabThicknessMm: r.slabThickness,
    typeCode: r.typeCode,
    typeName: r.typeName,
    categoryCode: r.categoryCode,
    face: r.face,
    positionAlongMm: r.position_along_mm,
    positionAcrossMm: r.position_across_mm,
    lengthMm: r.length_mm,
    widthMm: r.width_mm,
    depthMm: r.depth_mm,
    severity: r.severity,
    stage: r.stage,
    disposition: r.disposition,
    note: r.note,
    reviewStatus: r.review_status,
    reviewedByName: r.reviewedByName ?? null,
    reviewedAt: iso(r.reviewed_at),
    reviewNote: r.review_note ?? null,
    clientKey: r.client_key,
    foundAt: iso(r.found_at)!,
    createdAt: iso(r.created_at)!,
    updatedAt: iso(r.updated_at)!,
    createdById: r.created_by,
    createdByName: r.createdByName ?? null,
    photos,
    causes,
    canEdit: canChange(user, r as never),
  };
}

/**
 * The live causes of the defects, for callers who may read causes (the causes routes' capability);
 * for everyone else none, so the lists do not show what the causes routes would refuse.
 */
function causesFor(db: Db, user: Actor, defectIds: number[]): Map<number, Defect["causes"]> {
  return can(user.roles, "causes.read") ? causesBrief(db.$client, defectIds) : new Map();
}

export function getDefect(db: Db, id: number, user: Actor): Defect {
  const r = prepared(db.$client, `${SELECT} where d.id = ? and d.deleted_at is null`).get(id) as Row | undefined;
  if (!r) throw notFound(said("defects.noEntry"));
  return toDefect(r, photosOf(db.$client, [id]).get(id) ?? [], user, causesFor(db, user, [id]).get(id) ?? []);
}

/** The width of the face the position across is measured on. */
function acrossLimit(face: Face, slab: { width_mm: number; thickness_mm: number }) {
  return face === "left" || face === "right" ? slab.thickness_mm : slab.width_mm;
}

function checkPosition(
  v: { face: Face; position_along_mm: number | null; position_across_mm: number | null },
  slab: { slab_id: string; length_mm: number; width_mm: number; thickness_mm: number },
) {
  const problems: { path: string; message: string }[] = [];
  // The same words for the answer's message, in the requester's language (the details stay English).
  const saids: Said[] = [];
  if (v.position_along_mm != null && v.position_along_mm > slab.length_mm) {
    saids.push(said("defects.alongBeyond", { along: v.position_along_mm, length: slab.length_mm }));
    problems.push({ path: "position_along_mm", message: `${v.position_along_mm} mm from the head end is beyond the slab's length of ${slab.length_mm} mm.` });
  }
  const limit = acrossLimit(v.face, slab);
  if (v.position_across_mm != null && v.position_across_mm > limit) {
    const narrow = v.face === "left" || v.face === "right";
    saids.push(
      said(narrow ? "defects.acrossBeyondThick" : "defects.acrossBeyondWide", {
        across: v.position_across_mm,
        face: { terms: [`server:errors.defects.faces.${v.face}`] },
        limit,
      }),
    );
    problems.push({
      path: "position_across_mm",
      message: `${v.position_across_mm} mm across is beyond the ${FACE_LABELS[v.face].toLowerCase()}, which is ${limit} mm ${v.face === "left" || v.face === "right" ? "thick" : "wide"}.`,
    });
  }
  if (problems.length) throw new HttpError(400, "outside_slab", saids, problems);
}

type TypeRow = { id: number; active: number; code: string; name: string; category_code: string };

/** The catalogue type for a code (any case), with what an answer shows of it; refused when unknown or retired. */
function typeRow(sqlite: Database.Database, code: string): TypeRow {
  const t = prepared<[string], TypeRow>(
    sqlite,
    "select t.id, t.active, t.code, t.name, c.code as category_code from defect_types t join defect_categories c on c.id = t.category_id where upper(t.code) = upper(?)",
  ).get(code);
  if (!t) throw badRequest(said("defects.unknownType", { code }), { field: "type_code" }, "unknown_type");
  if (!t.active) throw badRequest(said("defects.retiredType", { code }), { field: "type_code" }, "retired_type");
  return t;
}

const typeId = (sqlite: Database.Database, code: string): number => typeRow(sqlite, code).id;

/** Dispositions by rank in SQL (shared/domain.ts DISPOSITION_RANK), worst highest. */
const RANK_SQL = `case disposition ${Object.entries(DISPOSITION_RANK)
  .map(([d, r]) => `when '${d}' then ${r}`)
  .join(" ")} end`;

/**
 * A slab takes the worst disposition of its live, unrejected defects (none: no disposition).
 * Decided by SQLite in one prepared statement over the slab's defects (found through their slab
 * index), so nothing per defect comes up to JavaScript. A new entry could in principle just raise
 * the slab's disposition, but the stored one is not always the worst of its live entries (rejected
 * entries of older data count there), so it is worked out again every time, as before.
 */
function refreshSlabDisposition(sqlite: Database.Database, slabRowId: number) {
  prepared(
    sqlite,
    `update slabs set updated_at = @now, disposition = (select disposition from defects where slab_id = @slab and deleted_at is null
       and review_status <> 'rejected' order by ${RANK_SQL} desc limit 1) where id = @slab`,
  ).run({ slab: slabRowId, now: Date.now() });
}

type SlabRow = {
  id: number;
  slab_id: string;
  length_mm: number;
  width_mm: number;
  thickness_mm: number;
  heat_no: string;
  grade_code: string;
  strand_no: number;
};

/**
 * Stores a new entry, or answers the one stored before under the same client_key (the offline queue
 * sends again when an answer was lost). A new entry is answered from what the transaction already
 * holds (the slab with its heat, grade and strand, the type with its category, the values stored),
 * not read back through the list's eight-table join: the same JSON, tests/server/write-path.test.ts
 * compares the two. An entry sent again is read back, as it may have changed since.
 */
export function createDefect(db: Db, user: Actor, input: CreateInput, events: DefectEvents = {}): { id: number; created: boolean; defect: Defect } {
  const result = storeDefectTx(db)(user, input);
  // A new entry has no photos and no causes yet.
  const defect = result.created ? toDefect(result.row, [], user, []) : getDefect(db, result.id, user);
  if (result.created && defect.severity === 4) events.criticalDefect?.(defect);
  return { id: result.id, created: result.created, defect };
}

type Stored = { id: number; created: false } | { id: number; created: true; row: Row };

/**
 * The transaction of a post, made once per connection: Drizzle's `db.transaction` builds better-
 * sqlite3's transaction wrappers (and an ORM transaction object) anew on every call. Same BEGIN
 * (deferred), COMMIT and, inside another transaction, savepoint as before.
 */
const storeTxs = new WeakMap<Database.Database, Database.Transaction<(user: Actor, input: CreateInput) => Stored>>();
function storeDefectTx(db: Db) {
  let tx = storeTxs.get(db.$client);
  if (!tx) storeTxs.set(db.$client, (tx = db.$client.transaction((user: Actor, input: CreateInput) => storeDefect(db, user, input))));
  return tx;
}

function storeDefect(db: Db, user: Actor, input: CreateInput): Stored {
  const sqlite = db.$client;
  const existing = prepared<[string], { id: number; created_by: string | null }>(sqlite, "select id, created_by from defects where client_key = ?").get(
    input.client_key,
  );
  if (existing) {
    if (existing.created_by !== user.id) throw conflict(said("defects.keyTaken"));
    return { id: existing.id, created: false };
  }
  const slabCode = input.slab_id.trim().toUpperCase();
  const slab = prepared<[string], SlabRow>(
    sqlite,
    `select s.id, s.slab_id, s.length_mm, s.width_mm, s.thickness_mm, h.heat_no, g.code as grade_code, st.strand_no
     from slabs s join heats h on h.id = s.heat_id join grades g on g.id = h.grade_id join strands st on st.id = s.strand_id where s.slab_id = ?`,
  ).get(slabCode);
  if (!slab) throw notFound(said("defects.noSlab", { slab: slabCode }));
  checkPosition(input, slab);
  const type = typeRow(sqlite, input.type_code);
  const now = Date.now();
  let foundAt = now;
  if (input.found_at) {
    foundAt = Date.parse(input.found_at);
    if (foundAt > now + 5 * 60_000) throw badRequest(said("defects.futureFoundAt"), { field: "found_at" });
  }
  const stored = {
    face: input.face,
    position_along_mm: input.position_along_mm,
    position_across_mm: input.position_across_mm,
    length_mm: input.length_mm ?? null,
    width_mm: input.width_mm ?? null,
    depth_mm: input.depth_mm ?? null,
    severity: input.severity,
    stage: input.stage,
    disposition: input.disposition,
    note: input.note || null,
    client_key: input.client_key,
    found_at: foundAt,
    created_by: user.id,
    created_at: now,
    updated_at: now,
  };
  const id = Number(
    prepared(
      sqlite,
      `insert into defects (slab_id, type_id, face, position_along_mm, position_across_mm, length_mm, width_mm, depth_mm, severity,
         stage, disposition, note, client_key, found_at, created_by, created_at, updated_at)
       values (@slab_id, @type_id, @face, @position_along_mm, @position_across_mm, @length_mm, @width_mm, @depth_mm, @severity,
         @stage, @disposition, @note, @client_key, @found_at, @created_by, @created_at, @updated_at)`,
    ).run({ ...stored, slab_id: slab.id, type_id: type.id }).lastInsertRowid,
  );
  refreshSlabDisposition(sqlite, slab.id);
  recordAudit(db, { userId: user.id, action: "defect.create", entity: "defect", entityId: id, after: { ...input, slab_id: slab.slab_id } });
  const createdByName = prepared<[string], string>(sqlite, "select name from user where id = ?").pluck().get(user.id) ?? null;
  // The row as SELECT (above) would read it back: the columns stored, the defaults of a new entry.
  const row: Row = {
    id,
    ...stored,
    slab_id: slab.id,
    type_id: type.id,
    review_status: "new",
    reviewed_by: null,
    reviewed_at: null,
    review_note: null,
    deleted_at: null,
    deleted_by: null,
    slabCode: slab.slab_id,
    slabLength: slab.length_mm,
    slabWidth: slab.width_mm,
    slabThickness: slab.thickness_mm,
    heatNo: slab.heat_no,
    gradeCode: slab.grade_code,
    strandNo: slab.strand_no,
    typeCode: type.code,
    typeName: type.name,
    categoryCode: type.category_code,
    createdByName,
    reviewedByName: null,
  };
  return { id, created: true, row };
}

function loadForChange(sqlite: Database.Database, id: number, user: Actor): Row {
  const row = prepared(
    sqlite,
    `select d.*, s.slab_id as slab_code, s.length_mm as slab_length_mm, s.width_mm as slab_width_mm, s.thickness_mm as slab_thickness_mm
     from defects d join slabs s on s.id = d.slab_id where d.id = ? and d.deleted_at is null`,
  ).get(id) as Row | undefined;
  if (!row) throw notFound(said("defects.noEntry"));
  if (!canChange(user, row as never)) {
    throw forbidden(row.created_by !== user.id ? said("defects.someoneElses") : said("defects.reviewed"));
  }
  return row;
}

const UPDATABLE = ["face", "position_along_mm", "position_across_mm", "length_mm", "width_mm", "depth_mm", "severity", "stage", "disposition", "note"] as const;

export function updateDefect(db: Db, user: Actor, id: number, patch: UpdateInput): Defect {
  const sqlite = db.$client;
  db.transaction(() => {
    const before = loadForChange(sqlite, id, user);
    const next: Row = { ...before };
    for (const k of UPDATABLE) if (patch[k] !== undefined) next[k] = patch[k] === "" ? null : patch[k];
    if (patch.type_code !== undefined) next.type_id = typeId(sqlite, patch.type_code);
    checkPosition(next as never, {
      slab_id: before.slab_code,
      length_mm: before.slab_length_mm,
      width_mm: before.slab_width_mm,
      thickness_mm: before.slab_thickness_mm,
    });
    prepared(
      sqlite,
      `update defects set type_id = @type_id, face = @face, position_along_mm = @position_along_mm, position_across_mm = @position_across_mm,
         length_mm = @length_mm, width_mm = @width_mm, depth_mm = @depth_mm, severity = @severity, stage = @stage, disposition = @disposition,
         note = @note, updated_at = @now where id = @id`,
    ).run({ ...pickColumns(next), now: Date.now(), id });
    refreshSlabDisposition(sqlite, before.slab_id);
    recordAudit(db, { userId: user.id, action: "defect.update", entity: "defect", entityId: id, before: pickColumns(before), after: pickColumns(next) });
  });
  return getDefect(db, id, user);
}

function pickColumns(r: Row) {
  return {
    type_id: r.type_id,
    face: r.face,
    position_along_mm: r.position_along_mm,
    position_across_mm: r.position_across_mm,
    length_mm: r.length_mm,
    width_mm: r.width_mm,
    depth_mm: r.depth_mm,
    severity: r.severity,
    stage: r.stage,
    disposition: r.disposition,
    note: r.note ?? null,
    review_status: r.review_status,
  };
}

export function deleteDefect(db: Db, user: Actor, id: number): { id: number; deleted: true } {
  const sqlite = db.$client;
  db.transaction(() => {
    const before = loadForChange(sqlite, id, user);
    const now = Date.now();
    prepared(sqlite, "update defects set deleted_at = ?, deleted_by = ?, updated_at = ? where id = ?").run(now, user.id, now, id);
    refreshSlabDisposition(sqlite, before.slab_id);
    recordAudit(db, { userId: user.id, action: "defect.delete", entity: "defect", entityId: id, before: pickColumns(before) });
  });
  return { id, deleted: true };
}

export function reviewDefect(db: Db, user: Actor, id: number, input: ReviewInput): Defect {
  const sqlite = db.$client;
  db.transaction(() => {
    const before = prepared(sqlite, "select * from defects where id = ? and deleted_at is null").get(id) as Row | undefined;
    if (!before) throw notFound(said("defects.noEntry"));
    const status = input.decision === "confirm" ? "confirmed" : input.decision === "correct" ? "corrected" : "rejected";
    const typeIdNext = input.type_code ? typeId(sqlite, input.type_code) : before.type_id;
    const severityNext = input.severity ?? before.severity;
    const now = Date.now();
    prepared(
      sqlite,
      "update defects set review_status = ?, reviewed_by = ?, reviewed_at = ?, review_note = ?, type_id = ?, severity = ?, updated_at = ? where id = ?",
    ).run(status, user.id, now, input.note ?? null, typeIdNext, severityNext, now, id);
    refreshSlabDisposition(sqlite, before.slab_id);
    recordAudit(db, {
      userId: user.id,
      action: `defect.review.${input.decision}`,
      entity: "defect",
      entityId: id,
      before: { review_status: before.review_status, type_id: before.type_id, severity: before.severity },
      after: { review_status: status, type_id: typeIdNext, severity: severityNext, note: input.note ?? null },
    });
  });
  return getDefect(db, id, user);
}

export function listDefects(db: Db, user: Actor, q: z.output<typeof defectListQuerySchema>) {
  const where = ["d.deleted_at is null"];
  const params: Record<string, unknown> = {};
  if (q.mine) {
    where.push("d.created_by = @me");
    params.me = user.id;
  }
  const from = parseDateBound(q.from, false, "from");
  const to = parseDateBound(q.to, true, "to");
  if (from !== undefined) {
    where.push("d.found_at >= @from");
    params.from = from;
  }
  if (to !== undefined) {
    where.push("d.found_at <= @to");
    params.to = to;
  }
  if (q.slab) {
    where.push("s.slab_id = @slab");
    params.slab = q.slab.toUpperCase();
  }
  if (q.heat) {
    where.push("h.heat_no = @heat");
    params.heat = q.heat.toUpperCase();
  }
  if (q.type) {
    where.push("upper(t.code) = upper(@type)");
    params.type = q.type;
  }
  if (q.reviewStatus) {
    where.push("d.review_status = @status");
    params.status = q.reviewStatus;
  }
  if (q.minSeverity !== undefined) {
    where.push("d.severity >= @minSeverity");
    params.minSeverity = q.minSeverity;
  }
  if (q.causes) {
    const live = "exists (select 1 from defect_causes dc where dc.defect_id = d.id and dc.removed_at is null)";
    where.push(q.causes === "none" ? `not ${live} and d.review_status <> 'rejected'` : live);
  }
  const w = where.join(" and ");
  const total = db.$client
    .prepare(
      `select count(*) from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id join defect_types t on t.id = d.type_id where ${w}`,
    )
    .pluck()
    .get(params) as number;
  const order =
    q.sort === "oldest" ? "d.found_at asc, d.id asc" : q.sort === "severity" ? "d.severity desc, d.found_at asc, d.id asc" : "d.found_at desc, d.id desc";
  const rows = db.$client.prepare(`${SELECT} where ${w} order by ${order} limit @limit offset @offset`).all({
    ...params,
    limit: q.pageSize,
    offset: (q.page - 1) * q.pageSize,
  }) as Row[];
  const photos = photosOf(
    db.$client,
    rows.map((r) => r.id),
  );
  const causes = causesFor(
    db,
    user,
    rows.map((r) => r.id as number),
  );
  return { items: rows.map((r) => toDefect(r, photos.get(r.id) ?? [], user, causes.get(r.id) ?? [])), total, page: q.page, pageSize: q.pageSize };
}

/** A photo as the route hands it over: the uploaded file's path (or, for the seed and benchmarks, its bytes). */
export interface UploadedFile {
  originalname: string;
  path?: string;
  buffer?: Buffer;
}

const photoCountOf = (sqlite: Database.Database, defectId: number) =>
  sqlite.prepare("select count(*) from defect_photos where defect_id = ? and deleted_at is null").pluck().get(defectId) as number;
/** Deleted photos count too: adding and removing in a loop is still work the server did. */
const photosAddedSince = (sqlite: Database.Database, userId: string, since: number) =>
  sqlite.prepare("select count(*) from defect_photos where created_by = ? and created_at >= ?").pluck().get(userId, since) as number;

function checkPhotoCaps(sqlite: Database.Database, user: Actor, defectId: number, adding: number) {
  const onDefect = photoCountOf(sqlite, defectId);
  if (onDefect + adding > PHOTO_MAX_PER_DEFECT) {
    throw new HttpError(
      409,
      "photo_limit",
      onDefect >= PHOTO_MAX_PER_DEFECT
        ? said("defects.photosFull", { n: onDefect })
        : said("defects.photosWouldPass", { n: onDefect, adding, max: PHOTO_MAX_PER_DEFECT, left: PHOTO_MAX_PER_DEFECT - onDefect }),
      { photos: onDefect, max: PHOTO_MAX_PER_DEFECT },
    );
  }
  const lastHour = photosAddedSince(sqlite, user.id, Date.now() - 60 * 60_000);
  if (lastHour + adding > PHOTO_MAX_PER_USER_HOUR) {
    throw new HttpError(429, "photo_rate", said("defects.photoRate", { n: lastHour, max: PHOTO_MAX_PER_USER_HOUR }), {
      lastHour,
      max: PHOTO_MAX_PER_USER_HOUR,
      retryAfterSeconds: 600,
    });
  }
}

/**
 * Before a byte of the photos is read: the entry exists and the caller may still change it, it has
 * room for a photo, the caller is under the hourly number, and the decode queue has room.
 */
export function precheckPhotos(db: Db, user: Actor, defectId: number) {
  const sqlite = db.$client;
  loadForChange(sqlite, defectId, user);
  checkPhotoCaps(sqlite, user, defectId, 1);
  admitPhotoDecodes(1);
}

/** Inside the final transaction: the entry may have been reviewed or deleted while the photos arrived. */
function recheckForPhotos(sqlite: Database.Database, user: Actor, defectId: number) {
  const row = sqlite.prepare("select created_by, review_status, deleted_at from defects where id = ?").get(defectId) as
    { created_by: string | null; review_status: string; deleted_at: number | null } | undefined;
  if (!row || row.deleted_at != null) {
    throw new HttpError(409, "changed_meanwhile", said("defects.deletedMeanwhile"));
  }
  if (!canChange(user, row)) {
    throw new HttpError(409, "changed_meanwhile", said("defects.reviewedMeanwhile"));
  }
}

/**
 * Adds photos to a defect. Every file is checked before any is stored; then the files are written
 * (decoded through the bounded queue); then all rows go in one transaction, which checks again that
 * the entry may still take them. A photo whose client key was stored before is not stored again.
 */
export async function addPhotos(db: Db, uploadDir: string, user: Actor, defectId: number, files: UploadedFile[], clientKeys: (string | null)[]) {
  const sqlite = db.$client;
  if (files.length === 0) throw new HttpError(400, "no_file", said("defects.noPhoto"));
  loadForChange(sqlite, defectId, user);
  const known = new Map<string, string>();
  for (const key of clientKeys) {
    if (!key) continue;
    const row = sqlite.prepare("select id, defect_id from defect_photos where client_key = ?").get(key) as { id: string; defect_id: number } | undefined;
    if (row && row.defect_id !== defectId) throw conflict(said("defects.photoKeyTaken"));
    if (row) known.set(key, row.id);
  }
  const todo: { index: number; key: string | null }[] = files
    .map((_, i) => ({ index: i, key: clientKeys[i] ?? null }))
    .filter((x) => !x.key || !known.has(x.key));
  if (todo.length) checkPhotoCaps(sqlite, user, defectId, todo.length);
  const input = (f: UploadedFile) => f.path ?? f.buffer!;
  const checked = await Promise.all(todo.map((x) => checkPhoto(input(files[x.index]!), files[x.index]!.originalname)));
  admitPhotoDecodes(checked.length);
  const stored: StoredPhotoFiles[] = [];
  try {
    // All queued at once (the queue bounds the decoding); the rows only after every file is written.
    const results = await Promise.allSettled(checked.map((c) => storePhotoFiles(uploadDir, c)));
    for (const r of results) if (r.status === "fulfilled") stored.push(r.value);
    const failed = results.find((r) => r.status === "rejected");
    if (failed) throw (failed as PromiseRejectedResult).reason;
    db.transaction(() => {
      recheckForPhotos(sqlite, user, defectId);
      checkPhotoCaps(sqlite, user, defectId, stored.length);
      const ins = sqlite.prepare(
        `insert into defect_photos (id, defect_id, display_file, display_mime, thumb_file, width, height, bytes, sha256, original_name, client_key, created_by, created_at)
         values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
      );
      const now = Date.now();
      stored.forEach((s, i) => {
        ins.run(
          s.id,
          defectId,
          s.displayFile,
          s.displayMime,
          s.thumbFile,
          s.width,
          s.height,
          s.bytes,
          s.sha256,
          checked[i]!.originalName,
          todo[i]!.key,
          user.id,
          now,
        );
      });
      sqlite.prepare("update defects set updated_at = ? where id = ?").run(now, defectId);
      recordAudit(db, {
        userId: user.id,
        action: "defect.photos.add",
        entity: "defect",
        entityId: defectId,
        after: { photos: stored.map((s) => ({ id: s.id, sha256: s.sha256 })) },
      });
    });
  } catch (err) {
    await removePhotoFiles(uploadDir, stored);
    throw err;
  }
  // In the order the files were sent, whether stored now or before.
  const newIds = new Map(todo.map((x, i) => [x.index, stored[i]!.id]));
  const ids = files.map((_, i) => newIds.get(i) ?? known.get(clientKeys[i]!)!);
  const byId = new Map((photosOf(sqlite, [defectId]).get(defectId) ?? []).map((p) => [p.id, p]));
  return { photos: ids.map((id) => byId.get(id)!) };
}

export function deletePhoto(db: Db, user: Actor, photoId: string) {
  const sqlite = db.$client;
  return db.transaction(() => {
    const p = sqlite.prepare("select id, defect_id from defect_photos where id = ? and deleted_at is null").get(photoId) as
      { id: string; defect_id: number } | undefined;
    if (!p) throw notFound(said("defects.noPhotoFound"));
    loadForChange(sqlite, p.defect_id, user);
    sqlite.prepare("update defect_photos set deleted_at = ? where id = ?").run(Date.now(), photoId);
    recordAudit(db, { userId: user.id, action: "defect.photos.delete", entity: "defect", entityId: p.defect_id, before: { photo: photoId } });
    return { id: photoId, deleted: true as const };
  });
}

export function photoFile(db: Db, photoId: string, kind: "display" | "thumb") {
  const p = db.$client.prepare("select display_file, display_mime, thumb_file, sha256 from defect_photos where id = ? and deleted_at is null").get(photoId) as
    { display_file: string; display_mime: string; thumb_file: string; sha256: string } | undefined;
  if (!p) throw notFound(said("defects.noPhotoFound"));
  return kind === "display"
    ? { file: p.display_file, mime: p.display_mime, etag: `"${photoId}-d"` }
    : { file: p.thumb_file, mime: "image/jpeg", etag: `"${photoId}-t"` };
}

/** Every file a photo row refers to (for the orphan cleanup). */
export function knownPhotoFiles(db: Db): Set<string> {
  const rows = db.$client.prepare("select display_file, thumb_file from defect_photos").raw().all() as [string, string][];
  return new Set(rows.flat());
}
