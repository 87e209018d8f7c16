/**
 * The cause taxonomy (groups and tags) and the tagging of defects with causes. A tagging is a row in
 * defect_causes; removing it sets removed_at/removed_by, so the history stays for good. Every change
 * writes an audit row in the same transaction.
 */
import type Database from "better-sqlite3";
import type { z } from "zod";
import type {
  BulkTagResult,
  CausePareto,
  CauseTag,
  CauseTaxonomy,
  DefectCause,
  DefectCauses,
  bulkTagSchema,
  causeParetoQuerySchema,
  causeTagCreateSchema,
  causeTagUpdateSchema,
  tagDefectSchema,
} from "@shared/api/causes";
import type { CauseConfidence } from "@shared/domain";
import type { Db } from "../db/client";
import { badRequest, conflict, figure, HttpError, notFound, said, writeFigure } from "../lib/http-error";
import { currentLanguage, say } from "../lib/words";
import { recordAudit } from "./audit.service";
import { buildScope } from "./reports/scope";

type Row = Record<string, any>;
export interface Actor {
  id: string;
}

const iso = (ms: number | null | undefined) => (ms == null ? null : new Date(ms).toISOString());
const CONFIDENCE_RANK: Record<CauseConfidence, number> = { suspected: 1, probable: 2, confirmed: 3 };

// ------------------------------------------------------------------------------------------------
// Taxonomy
// ------------------------------------------------------------------------------------------------

function tagRows(sqlite: Database.Database, where = "1", ...args: unknown[]) {
  return sqlite
    .prepare(
      `select t.id, t.code, t.name, t.description, t.retired_at, g.code as groupCode, g.name as groupName, g.sort_order,
         (select count(*) from defect_causes dc where dc.tag_id = t.id and dc.removed_at is null) as uses,
         exists (select 1 from defect_causes dc where dc.tag_id = t.id)
           or exists (select 1 from investigations i where i.confirmed_cause_tag_id = t.id)
           or exists (select 1 from investigation_hypotheses h where h.cause_tag_id = t.id) as everUsed
       from cause_tags t join cause_groups g on g.id = t.group_id where ${where} order by g.sort_order, t.name`,
    )
    .all(...args) as Row[];
}

const toTag = (r: Row): CauseTag => ({
  code: r.code,
  name: r.name,
  group: r.groupCode,
  description: r.description ?? null,
  retired: r.retired_at != null,
  uses: r.uses,
  everUsed: Boolean(r.everUsed),
});

export function listTaxonomy(db: Db, includeRetired: boolean): CauseTaxonomy {
  const sqlite = db.$client;
  const groups = sqlite.prepare("select code, name from cause_groups order by sort_order, name").all() as Row[];
  const tags = tagRows(sqlite, includeRetired ? "1" : "t.retired_at is null").map((r) => toTag(r));
  return { groups: groups.map((g) => ({ code: g.code, name: g.name, tags: tags.filter((t) => t.group === g.code) })) };
}

function tagByCode(sqlite: Database.Database, code: string): Row {
  const r = sqlite.prepare("select * from cause_tags where code = ?").get(code.trim().toLowerCase()) as Row | undefined;
  if (!r) throw notFound(said("causes.noTag", { code }));
  return r;
}

function getTag(db: Db, code: string): CauseTag {
  const r = tagRows(db.$client, "t.code = ?", code)[0];
  if (!r) throw notFound(said("causes.noTag", { code }));
  return toTag(r);
}

function groupId(sqlite: Database.Database, code: string): number {
  const id = sqlite.prepare("select id from cause_groups where code = ?").pluck().get(code) as number | undefined;
  if (id === undefined) throw badRequest(said("causes.noGroup", { code }), { field: "group" });
  return id;
}

export function createTag(db: Db, user: Actor, input: z.output<typeof causeTagCreateSchema>): CauseTag {
  const sqlite = db.$client;
  db.transaction(() => {
    if (sqlite.prepare("select 1 from cause_tags where code = ?").get(input.code)) {
      throw conflict(said("causes.tagExists", { code: input.code }), { field: "code" });
    }
    const now = Date.now();
    sqlite
      .prepare("insert into cause_tags (code, name, group_id, description, created_at, updated_at) values (?, ?, ?, ?, ?, ?)")
      .run(input.code, input.name, groupId(sqlite, input.group), input.description ?? null, now, now);
    recordAudit(db, { userId: user.id, action: "cause_tag.create", entity: "cause_tag", entityId: input.code, after: input });
  });
  return getTag(db, input.code);
}

export function updateTag(db: Db, user: Actor, code: string, input: z.output<typeof causeTagUpdateSchema>): CauseTag {
  const sqlite = db.$client;
  db.transaction(() => {
    const before = tagByCode(sqlite, code);
    const sets: string[] = [];
    const args: unknown[] = [];
    if (input.name !== undefined) (sets.push("name = ?"), args.push(input.name));
    if (input.description !== undefined) (sets.push("description = ?"), args.push(input.description));
    if (input.group !== undefined) (sets.push("group_id = ?"), args.push(groupId(sqlite, input.group)));
    if (input.retired !== undefined) (sets.push("retired_at = ?"), args.push(input.retired ? (before.retired_at ?? Date.now()) : null));
    sets.push("updated_at = ?");
    args.push(Date.now(), before.id);
    sqlite.prepare(`update cause_tags set ${sets.join(", ")} where id = ?`).run(...args);
    const action =
      input.retired === true && before.retired_at == null
        ? "cause_tag.retire"
        : input.retired === false && before.retired_at != null
          ? "cause_tag.reinstate"
          : "cause_tag.update";
    recordAudit(db, {
      userId: user.id,
      action,
      entity: "cause_tag",
      entityId: before.code,
      before: { name: before.name, description: before.description, groupId: before.group_id, retiredAt: before.retired_at },
      after: input,
    });
  });
  return getTag(db, code.trim().toLowerCase());
}

/** Only a tag that was never used goes; one in use (or used once) is retired instead. */
export function deleteTag(db: Db, user: Actor, code: string): void {
  const tag = getTag(db, code.trim().toLowerCase());
  if (tag.everUsed) {
    throw conflict(said("causes.tagUsed", { code: tag.code }), {
      everUsed: true,
      uses: tag.uses,
    });
  }
  db.transaction(() => {
    db.$client.prepare("delete from cause_tags where code = ?").run(tag.code);
    recordAudit(db, { userId: user.id, action: "cause_tag.delete", entity: "cause_tag", entityId: tag.code, before: tag });
  });
}

// ------------------------------------------------------------------------------------------------
// Tagging
// ------------------------------------------------------------------------------------------------

const LINK_SELECT = `select dc.*, t.code as tagCode, t.name as tagName, g.code as groupCode, cu.name as byName, ru.name as removedByName
  from defect_causes dc join cause_tags t on t.id = dc.tag_id join cause_groups g on g.id = t.group_id
  left join user cu on cu.id = dc.created_by left join user ru on ru.id = dc.removed_by`;

const toLink = (r: Row): DefectCause => ({
  id: r.id,
  tag: r.tagCode,
  tagName: r.tagName,
  group: r.groupCode,
  confidence: r.confidence,
  note: r.note ?? null,
  by: r.created_by ? { id: r.created_by, name: r.byName ?? "" } : null,
  at: iso(r.created_at)!,
  removedAt: iso(r.removed_at),
  removedBy: r.removed_by ? { id: r.removed_by, name: r.removedByName ?? "" } : null,
});

function liveDefect(sqlite: Database.Database, id: number): Row {
  const d = sqlite.prepare("select id, review_status from defects where id = ? and deleted_at is null").get(id) as Row | undefined;
  if (!d) throw notFound(said("defects.noEntry"));
  return d;
}

export function defectCauses(db: Db, defectId: number): DefectCauses {
  const sqlite = db.$client;
  liveDefect(sqlite, defectId);
  const rows = (sqlite.prepare(`${LINK_SELECT} where dc.defect_id = ? order by dc.created_at, dc.id`).all(defectId) as Row[]).map(toLink);
  return { defectId, current: rows.filter((r) => r.removedAt === null), history: rows };
}

/** The live causes of many defects at once, for lists (slab page, defect lists). */
export function causesBrief(sqlite: Database.Database, defectIds: number[]) {
  const map = new Map<number, { tag: string; tagName: string; confidence: CauseConfidence }[]>();
  if (defectIds.length === 0) return map;
  for (let i = 0; i < defectIds.length; i += 500) {
    const part = defectIds.slice(i, i + 500);
    const rows = sqlite
      .prepare(
        `select dc.defect_id, t.code, t.name, dc.confidence from defect_causes dc join cause_tags t on t.id = dc.tag_id
         where dc.removed_at is null and dc.defect_id in (${part.map(() => "?").join(",")}) order by dc.created_at, dc.id`,
      )
      .all(...part) as Row[];
    for (const r of rows) {
      const list = map.get(r.defect_id) ?? [];
      list.push({ tag: r.code, tagName: r.name, confidence: r.confidence });
      map.set(r.defect_id, list);
    }
  }
  return map;
}

function activeTagIds(sqlite: Database.Database, codes: string[]): { id: number; code: string }[] {
  const unique = [...new Set(codes.map((c) => c.trim().toLowerCase()))];
  const rows = sqlite.prepare(`select id, code, retired_at from cause_tags where code in (${unique.map(() => "?").join(",")})`).all(...unique) as Row[];
  const unknown = unique.filter((c) => !rows.some((r) => r.code === c));
  if (unknown.length)
    throw badRequest(said("causes.unknownTags", { count: unknown.length, tags: unknown.join(", ") }), { field: "tags", unknown }, "unknown_tag");
  const retired = rows.filter((r) => r.retired_at != null).map((r) => r.code);
  if (retired.length)
    throw badRequest(said("causes.retiredTags", { count: retired.length, tags: retired.join(", ") }), { field: "tags", retired }, "retired_tag");
  // In the order given, so the audit and the answer read as the user wrote them.
  return unique.map((c) => rows.find((r) => r.code === c)!).map((r) => ({ id: r.id, code: r.code }));
}

/**
 * Tags one defect with each tag. A tag the defect already carries with the same confidence and
 * note is left alone; with a different one, the old tagging is closed and a new one written, so the
 * history shows how the judgement moved. Returns the numbers of taggings written and unchanged.
 */
function tagInTx(
  sqlite: Database.Database,
  user: Actor,
  defectId: number,
  tags: { id: number; code: string }[],
  confidence: CauseConfidence,
  note: string | null,
  now: number,
) {
  let tagged = 0;
  let unchanged = 0;
  const live = sqlite.prepare("select id, confidence, note from defect_causes where defect_id = ? and tag_id = ? and removed_at is null");
  const close = sqlite.prepare("update defect_causes set removed_at = ?, removed_by = ? where id = ?");
  const insert = sqlite.prepare("insert into defect_causes (defect_id, tag_id, confidence, note, created_by, created_at) values (?, ?, ?, ?, ?, ?)");
  for (const t of tags) {
    const existing = live.all(defectId, t.id) as Row[];
    if (existing.length === 1 && existing[0]!.confidence === confidence && (existing[0]!.note ?? null) === note) {
      unchanged++;
      continue;
    }
    for (const e of existing) close.run(now, user.id, e.id);
    insert.run(defectId, t.id, confidence, note, user.id, now);
    tagged++;
  }
  return { tagged, unchanged };
}

export function tagDefect(db: Db, user: Actor, defectId: number, input: z.output<typeof tagDefectSchema>): DefectCauses {
  const sqlite = db.$client;
  db.transaction(() => {
    liveDefect(sqlite, defectId);
    const tags = activeTagIds(sqlite, input.tags);
    const r = tagInTx(sqlite, user, defectId, tags, input.confidence, input.note ?? null, Date.now());
    if (r.tagged) {
      recordAudit(db, {
        userId: user.id,
        action: "defect.causes.tag",
        entity: "defect",
        entityId: defectId,
        after: { tags: tags.map((t) => t.code), confidence: input.confidence, note: input.note ?? null },
      });
    }
  });
  return defectCauses(db, defectId);
}

export function untagDefect(db: Db, user: Actor, defectId: number, linkId: number, reason: string | undefined): DefectCauses {
  const sqlite = db.$client;
  db.transaction(() => {
    liveDefect(sqlite, defectId);
    const link = sqlite.prepare(`${LINK_SELECT} where dc.id = ? and dc.defect_id = ?`).get(linkId, defectId) as Row | undefined;
    if (!link) throw notFound(said("causes.noTagging"));
    if (link.removed_at != null) throw conflict(said("causes.taggingRemoved"));
    sqlite.prepare("update defect_causes set removed_at = ?, removed_by = ? where id = ?").run(Date.now(), user.id, linkId);
    recordAudit(db, {
      userId: user.id,
      action: "defect.causes.remove",
      entity: "defect",
      entityId: defectId,
      before: toLink(link),
      after: { reason: reason ?? null },
    });
  });
  return defectCauses(db, defectId);
}

/** The live, unrejected defects a bulk selection covers. */
function selectDefects(db: Db, sel: z.output<typeof bulkTagSchema>["selection"], types: string[] | undefined): number[] {
  const sqlite = db.$client;
  const base = "d.deleted_at is null and d.review_status <> 'rejected'";
  let typeClause = "";
  if (types?.length) {
    const ids = sqlite
      .prepare(`select id from defect_types where upper(code) in (${types.map(() => "?").join(",")})`)
      .pluck()
      .all(...types.map((t) => t.toUpperCase())) as number[];
    if (ids.length < new Set(types.map((t) => t.toUpperCase())).size)
      throw badRequest(said("causes.unknownTypeAmong", { types: types.join(", ") }), { field: "defectType" });
    typeClause = ` and d.type_id in (${ids.join(",")})`;
  }
  switch (sel.kind) {
    case "heat": {
      const heat = sqlite.prepare("select id from heats where heat_no = ?").pluck().get(sel.heatNo.trim().toUpperCase()) as number | undefined;
      if (heat === undefined) throw notFound(said("heats.noHeatOnRecord", { heat: sel.heatNo }));
      return sqlite
        .prepare(`select d.id from defects d join slabs s on s.id = d.slab_id where s.heat_id = ? and ${base}${typeClause} order by d.id`)
        .pluck()
        .all(heat) as number[];
    }
    case "sequence": {
      const seq = sqlite.prepare("select id from sequences where sequence_no = ?").pluck().get(sel.sequenceNo.trim().toUpperCase()) as number | undefined;
      if (seq === undefined) throw notFound(said("causes.noSequence", { sequence: sel.sequenceNo }));
      return sqlite
        .prepare(
          `select d.id from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id where h.sequence_id = ? and ${base}${typeClause} order by d.id`,
        )
        .pluck()
        .all(seq) as number[];
    }
    case "filter": {
      // The report filters: slab filters on slab_conditions, defect filters as the reports apply them.
      const scope = buildScope(db, sel.filters);
      const slabWhere = scope.where.length ? ` and ${scope.where.join(" and ")}` : "";
      return sqlite
        .prepare(
          `select d.id from defects d join slab_conditions c on c.slab_id = d.slab_id where ${scope.defectWhere.join(" and ")}${slabWhere}${typeClause} order by d.id`,
        )
        .pluck()
        .all(scope.params) as number[];
    }
    case "defects": {
      const ids = [...new Set(sel.ids)];
      const found = sqlite
        .prepare(`select d.id from defects d where d.id in (${ids.join(",")}) and ${base}${typeClause} order by d.id`)
        .pluck()
        .all() as number[];
      if (found.length < ids.length && !typeClause) {
        const missing = ids.filter((i) => !found.includes(i));
        throw badRequest(said("causes.noLiveEntries", { ids: `${missing.slice(0, 10).join(", ")}${missing.length > 10 ? "…" : ""}` }), {
          field: "selection.ids",
          missing,
        });
      }
      return found;
    }
  }
}

const BULK_LIMIT = 20_000;

export function bulkTag(db: Db, user: Actor, input: z.output<typeof bulkTagSchema>): BulkTagResult {
  const sqlite = db.$client;
  const ids = selectDefects(db, input.selection, input.defectType);
  if (ids.length > BULK_LIMIT) {
    throw new HttpError(400, "selection_too_large", said("causes.selectionTooLarge", { n: figure(ids.length), max: figure(BULK_LIMIT) }));
  }
  const tags = activeTagIds(sqlite, input.tags);
  const sample = ids.length
    ? (sqlite
        .prepare(
          `select d.id, s.slab_id as slabId, t.code as type, d.severity from defects d join slabs s on s.id = d.slab_id join defect_types t on t.id = d.type_id where d.id in (${ids.slice(0, 20).join(",")}) order by d.id`,
        )
        .all() as BulkTagResult["sample"])
    : [];
  const note = input.note ?? null;
  if (input.dryRun) {
    const same = sqlite
      .prepare(
        "select count(*) from defect_causes where defect_id = ? and tag_id = ? and removed_at is null and confidence = ? and coalesce(note, '') = coalesce(?, '')",
      )
      .pluck();
    let unchanged = 0;
    for (const id of ids) for (const t of tags) unchanged += (same.get(id, t.id, input.confidence, note) as number) > 0 ? 1 : 0;
    return { dryRun: true, defects: ids.length, tagged: ids.length * tags.length - unchanged, unchanged, sample };
  }
  let tagged = 0;
  let unchanged = 0;
  db.transaction(() => {
    const now = Date.now();
    for (const id of ids) {
      const r = tagInTx(sqlite, user, id, tags, input.confidence, note, now);
      tagged += r.tagged;
      unchanged += r.unchanged;
    }
    recordAudit(db, {
      userId: user.id,
      action: "defect.causes.bulk_tag",
      entity: "defect_selection",
      entityId:
        input.selection.kind === "heat" ? input.selection.heatNo : input.selection.kind === "sequence" ? input.selection.sequenceNo : input.selection.kind,
      after: {
        selection: input.selection,
        defectType: input.defectType ?? null,
        tags: tags.map((t) => t.code),
        confidence: input.confidence,
        note,
        defects: ids,
        tagged,
        unchanged,
      },
    });
  });
  return { dryRun: false, defects: ids.length, tagged, unchanged, sample };
}

// ------------------------------------------------------------------------------------------------
// Cause Pareto
// ------------------------------------------------------------------------------------------------

export function causePareto(db: Db, q: z.output<typeof causeParetoQuerySchema>): CausePareto {
  const sqlite = db.$client;
  const scope = buildScope(db, q);
  const slabWhere = scope.where.length ? ` and ${scope.where.join(" and ")}` : "";
  const from = `from defects d join slab_conditions c on c.slab_id = d.slab_id where ${scope.defectWhere.join(" and ")}${slabWhere}`;
  const minRank = CONFIDENCE_RANK[q.minConfidence];
  const confidences = (Object.keys(CONFIDENCE_RANK) as CauseConfidence[]).filter((k) => CONFIDENCE_RANK[k] >= minRank);
  const confIn = `(${confidences.map((c) => `'${c}'`).join(",")})`;
  const defects = sqlite.prepare(`select count(*) ${from}`).pluck().get(scope.params) as number;
  const tagged = sqlite
    .prepare(
      `select count(*) ${from} and exists (select 1 from defect_causes dc where dc.defect_id = d.id and dc.removed_at is null and dc.confidence in ${confIn})`,
    )
    .pluck()
    .get(scope.params) as number;
  const rows = sqlite
    .prepare(
      `select t.code, t.name, g.code as grp, t.retired_at, count(distinct d.id) as defects, count(distinct d.slab_id) as slabs,
         count(distinct case when dc.confidence = 'suspected' then d.id end) as suspected,
         count(distinct case when dc.confidence = 'probable' then d.id end) as probable,
         count(distinct case when dc.confidence = 'confirmed' then d.id end) as confirmed
       ${from.replace("from defects d", "from defects d join defect_causes dc on dc.defect_id = d.id and dc.removed_at is null join cause_tags t on t.id = dc.tag_id join cause_groups g on g.id = t.group_id")}
         and dc.confidence in ${confIn}
       group by t.id order by defects desc, t.name`,
    )
    .all(scope.params) as Row[];
  const total = rows.reduce((s, r) => s + r.defects, 0);
  let cum = 0;
  const notes: string[] = [];
  // In the reader's language, counts grouped as it writes them (2,395 · 2.395).
  const n = (x: number) => writeFigure(figure(x), currentLanguage());
  if (defects === 0) notes.push(say("causePareto.noDefect"));
  else if (tagged < 30) notes.push(say("causePareto.fewTagged", { count: tagged, n: n(tagged) }));
  if (defects > 0 && tagged / defects < 0.5) notes.push(say("causePareto.untagged", { untagged: n(defects - tagged), defects: n(defects) }));
  return {
    defects,
    tagged,
    untagged: defects - tagged,
    rows: rows.map((r) => {
      cum += r.defects;
      return {
        code: r.code,
        name: r.name,
        group: r.grp,
        retired: r.retired_at != null,
        defects: r.defects,
        slabs: r.slabs,
        suspected: r.suspected,
        probable: r.probable,
        confirmed: r.confirmed,
        share: total ? r.defects / total : 0,
        cumulative: total ? cum / total : 0,
      };
    }),
    notes,
  };
}
