/**
 * Operating windows (issue 15): plain rules per grade family ("casting speed above 1.6 m/min and
 * EMBr current below 150 A"). A slab whose resolved conditions meet every condition of a live rule
 * is flagged with the rule's name; each rule keeps a record on history (flagged slabs and the share
 * of them with the defect against the rest, Wilson intervals), so the plant sees which rules earn
 * their keep. Rules are retired (retired_at), never deleted; every write is audited in its
 * transaction.
 *
 * Safety of the SQL: a condition's variable is looked up in the variables catalogue and only the
 * catalogue's own key (a slab_conditions column) is ever written into a statement; every value,
 * family, window bound and defect type id is a bound parameter.
 *
 * Speed: the records of all live rules come from one read of the window's slabs (the columns the
 * rules use) and one query of the affected slabs per target, with the rules checked in JS on each
 * row. Measured on the 1M-slab bench plant (a year holds 525,000 slabs): reading ≈ 0.9 s, then each
 * rule adds a few ms; one grouped SQL query per rule took ≈ 0.4 s each, i.e. 40 s for 100 rules.
 * The answer is kept until the slabs' conditions, the defect entries or the rules change.
 */
import type Database from "better-sqlite3";
import type { z } from "zod";
import {
  MAX_FLAG_SLABS,
  MAX_LIVE_WINDOWS,
  WINDOW_CAUTION,
  WINDOW_RECORD_DAYS,
  conditionText,
  conditionsText,
  windowConditionSchema,
  type OperatingWindow,
  type WindowCondition,
  type WindowFlags,
  type WindowRecord,
  type WindowShare,
  type createWindowSchema,
  type updateWindowSchema,
  type windowFlagsQuerySchema,
  type windowListQuerySchema,
} from "@shared/api/operating-windows";
import { VARIABLES } from "@shared/variables";
import { databaseIdOf } from "../db/identity";
import type { Db } from "../db/client";
import { badRequest, conflict, notFound, said } from "../lib/http-error";
import { say } from "../lib/words";
import { differenceOfProportions, wilson } from "../stats/proportions";
import { recordAudit } from "./audit.service";
import { targetTypeIds } from "./risk/training-data";

type Row = Record<string, any>;
export interface Actor {
  id: string;
}

const DAY = 86_400_000;
const iso = (ms: number | null | undefined) => (ms == null ? null : new Date(ms).toISOString());
const day = (ms: number) => new Date(ms).toISOString().slice(0, 10);

/** How a rule's record is reached, in the reader's language (methods:windows.method). */
export const windowMethod = () => say("windows.method");

// ------------------------------------------------------------------------------------------------
// Rules as stored
// ------------------------------------------------------------------------------------------------

interface Rule {
  id: number;
  name: string;
  familyId: number | null;
  familyCode: string | null;
  familyName: string | null;
  targetKind: "type" | "category" | null;
  targetCode: string | null;
  /** Null when the stored conditions do not read as valid ones (then the rule flags nothing). */
  conditions: WindowCondition[] | null;
  note: string | null;
  createdByName: string | null;
  createdAt: number;
  updatedAt: number;
  retiredAt: number | null;
}

function parseConditions(stored: unknown): WindowCondition[] | null {
  let value = stored;
  if (typeof value === "string") {
    try {
      value = JSON.parse(value);
    } catch {
      return null;
    }
  }
  if (!Array.isArray(value) || value.length === 0) return null;
  const out: WindowCondition[] = [];
  for (const c of value) {
    const p = windowConditionSchema.safeParse(c);
    if (!p.success) return null;
    out.push(p.data);
  }
  return out;
}

function loadRules(sqlite: Database.Database, where: string, ...args: unknown[]): Rule[] {
  const rows = sqlite
    .prepare(
      `select w.*, f.code as family_code, f.name as family_name from operating_windows w left join grade_families f on f.id = w.family_id
       where ${where} order by w.retired_at is not null, lower(w.name), w.id`,
    )
    .all(...args) as Row[];
  return rows.map((r) => ({
    id: r.id,
    name: r.name,
    familyId: r.family_id ?? null,
    familyCode: r.family_code ?? null,
    familyName: r.family_name ?? null,
    targetKind: r.target_kind === "type" || r.target_kind === "category" ? r.target_kind : null,
    targetCode: r.target_code ?? null,
    conditions: parseConditions(r.conditions),
    note: r.note ?? null,
    createdByName: r.created_by_name ?? null,
    createdAt: r.created_at,
    updatedAt: r.updated_at,
    retiredAt: r.retired_at ?? null,
  }));
}

/** The catalogue's column for a variable key (never the stored or sent text itself). */
function columnOf(key: string): string {
  const v = VARIABLES.find((x) => x.key === key);
  if (!v) throw new Error(`Unknown variable ${key}`);
  return v.key;
}

function targetName(sqlite: Database.Database, kind: "type" | "category" | null, code: string | null): string | null {
  if (!kind || !code) return null;
  return (
    (sqlite
      .prepare(
        kind === "type" ? "select name from defect_types where upper(code) = upper(?)" : "select name from defect_categories where upper(code) = upper(?)",
      )
      .pluck()
      .get(code) as string | undefined) ?? null
  );
}

// ------------------------------------------------------------------------------------------------
// Checking slabs against rules
// ------------------------------------------------------------------------------------------------

const FLAGGED = 1;
const REST = 0;
const UNKNOWN = 2;

interface Compiled {
  rule: Rule;
  /** Index into the row of each condition's value. */
  cols: number[];
  ops: boolean[]; // true: above
  values: number[];
}

/** Rules compiled against a row layout: [slab_id, family_id, ...columns]. */
function compile(rules: Rule[]): { columns: string[]; compiled: Compiled[] } {
  const columns: string[] = [];
  const compiled: Compiled[] = [];
  for (const rule of rules) {
    if (!rule.conditions) continue;
    const cols = rule.conditions.map((c) => {
      const col = columnOf(c.variable);
      let i = columns.indexOf(col);
      if (i < 0) i = columns.push(col) - 1;
      return 2 + i;
    });
    compiled.push({ rule, cols, ops: rule.conditions.map((c) => c.op === "above"), values: rule.conditions.map((c) => c.value) });
  }
  return { columns, compiled };
}

/** Three-valued: every condition holds (flagged), one fails (rest), or a needed value is missing and none fails (unknown). */
function judge(c: Compiled, row: (number | null)[]): number {
  let state = FLAGGED;
  for (let j = 0; j < c.cols.length; j++) {
    const v = row[c.cols[j]!];
    if (v === null || v === undefined) {
      state = UNKNOWN;
      continue;
    }
    if (c.ops[j] ? !(v > c.values[j]!) : !(v < c.values[j]!)) return REST;
  }
  return state;
}

const selectColumns = (columns: string[]) => `c.slab_id, c.family_id${columns.map((k) => `, c.${k}`).join("")}`;

/** The names of the live rules flagging each slab (by slab row id); slabs no rule flags are left out. */
export function windowFlagsForSlabs(db: Db, slabRowIds: number[]): Map<number, { id: number; name: string }[]> {
  const out = new Map<number, { id: number; name: string }[]>();
  if (slabRowIds.length === 0) return out;
  const sqlite = db.$client;
  const { columns, compiled } = compile(loadRules(sqlite, "w.retired_at is null"));
  if (compiled.length === 0) return out;
  for (let i = 0; i < slabRowIds.length; i += 500) {
    const part = slabRowIds.slice(i, i + 500);
    const rows = sqlite
      .prepare(`select ${selectColumns(columns)} from slab_conditions c where c.slab_id in (${part.map(() => "?").join(",")})`)
      .raw()
      .all(...part) as (number | null)[][];
    for (const row of rows) {
      for (const c of compiled) {
        if (c.rule.familyId !== null && row[1] !== c.rule.familyId) continue;
        if (judge(c, row) !== FLAGGED) continue;
        const list = out.get(row[0]!) ?? [];
        list.push({ id: c.rule.id, name: c.rule.name });
        out.set(row[0]!, list);
      }
    }
  }
  return out;
}

// ------------------------------------------------------------------------------------------------
// Records on history
// ------------------------------------------------------------------------------------------------

interface Counts {
  n1: number;
  x1: number;
  n0: number;
  x0: number;
  unknown: number;
}

/** The slabs cast in [from, to) that carry a live, not rejected entry of the target (null target: any type). */
function affectedSlabs(sqlite: Database.Database, kind: "type" | "category" | null, code: string | null, from: number, to: number): Set<number> {
  let typeFilter = "";
  let typeIds: number[] = [];
  if (kind && code) {
    typeIds = targetTypeIds(sqlite, { targetKind: kind, targetCode: code });
    if (typeIds.length === 0) return new Set();
    typeFilter = ` and d.type_id in (${typeIds.map(() => "?").join(",")})`;
  }
  const ids = sqlite
    .prepare(
      `select distinct d.slab_id from defects d join slab_conditions c on c.slab_id = d.slab_id
       where d.deleted_at is null and d.review_status <> 'rejected'${typeFilter} and c.cast_at >= ? and c.cast_at < ?`,
    )
    .pluck()
    .all(...typeIds, from, to) as number[];
  return new Set(ids);
}

/** Slabs read per page of the record's pass; the event loop is given back between pages. */
const RECORD_PAGE = 20_000;

/**
 * Every rule's counts in one pass over the window's slabs, a page at a time in cast order (keyset on
 * the cast-time index, whose entries end in the slab id), giving the event loop back between pages:
 * a year of a large plant is half a million slabs, and the yard is answered meanwhile.
 */
async function countRecords(sqlite: Database.Database, rules: Rule[], from: number, to: number): Promise<Map<number, Counts>> {
  const { columns, compiled } = compile(rules);
  const counts = new Map<number, Counts>(rules.map((r) => [r.id, { n1: 0, x1: 0, n0: 0, x0: 0, unknown: 0 }]));
  if (compiled.length === 0) return counts;
  const targetKeys: string[] = [];
  const targetOf = compiled.map((c) => {
    const k = c.rule.targetKind && c.rule.targetCode ? `${c.rule.targetKind}:${c.rule.targetCode.toUpperCase()}` : "*";
    let i = targetKeys.indexOf(k);
    if (i < 0) i = targetKeys.push(k) - 1;
    return i;
  });
  const sets = targetKeys.map((k) => {
    const c = compiled[targetOf.indexOf(targetKeys.indexOf(k))]!.rule;
    return affectedSlabs(sqlite, k === "*" ? null : c.targetKind, k === "*" ? null : c.targetCode, from, to);
  });
  const per = compiled.map((c) => counts.get(c.rule.id)!);
  const affected = new Uint8Array(targetKeys.length);
  const page = sqlite
    .prepare(
      `select ${selectColumns(columns)}, c.cast_at from slab_conditions c where c.cast_at < @to
         and (c.cast_at > @at or (c.cast_at = @at and c.slab_id > @id)) order by c.cast_at, c.slab_id limit ${RECORD_PAGE}`,
    )
    .raw();
  let at = from;
  let lastId = -Infinity;
  // The first page starts at `from` inclusive: every slab id is above -Infinity.
  for (;;) {
    const rows = page.all({ to, at, id: lastId === -Infinity ? -9e15 : lastId }) as (number | null)[][];
    if (rows.length === 0) break;
    countPage(rows);
    const last = rows[rows.length - 1]!;
    at = last[last.length - 1]!;
    lastId = last[0]!;
    if (rows.length < RECORD_PAGE) break;
    await new Promise((resolve) => setImmediate(resolve));
  }
  return counts;

  function countPage(rows: (number | null)[][]) {
    for (const row of rows) {
      const id = row[0]!;
      for (let t = 0; t < sets.length; t++) affected[t] = sets[t]!.has(id) ? 1 : 0;
      for (let k = 0; k < compiled.length; k++) {
        const c = compiled[k]!;
        if (c.rule.familyId !== null && row[1] !== c.rule.familyId) continue;
        const state = judge(c, row);
        const n = per[k]!;
        if (state === FLAGGED) {
          n.n1++;
          n.x1 += affected[targetOf[k]!]!;
        } else if (state === REST) {
          n.n0++;
          n.x0 += affected[targetOf[k]!]!;
        } else n.unknown++;
      }
    }
  }
}

const share = (x: number, n: number): WindowShare => {
  if (n === 0) return { slabs: 0, affected: 0, share: null, lower: null, upper: null };
  const w = wilson(x, n);
  return { slabs: n, affected: x, share: w.p, lower: w.lower, upper: w.upper };
};

/** The record of one rule from its counts: shares, Wilson intervals, the difference and the verdict. */
export function windowRecord(c: Counts, from: string, to: string): WindowRecord {
  const flagged = share(c.x1, c.n1);
  const rest = share(c.x0, c.n0);
  const base = { from, to, flagged, rest, unknown: c.unknown, method: windowMethod() };
  const noVerdict = (verdictText: string): WindowRecord => ({
    ...base,
    difference: null,
    differenceLower: null,
    differenceUpper: null,
    intervalsOverlap: null,
    verdict: null,
    verdictText,
  });
  if (c.n1 === 0) return noVerdict(say("windows.noneFlagged"));
  if (c.n0 === 0) return noVerdict(say("windows.allFlagged"));
  const d = differenceOfProportions(c.x1, c.n1, c.x0, c.n0);
  const overlap = flagged.lower! <= rest.upper! && rest.lower! <= flagged.upper!;
  const verdict = d.lower > 0 ? "more" : d.upper < 0 ? "less" : "no_clear_difference";
  // One whole sentence per verdict and overlap (methods:windows.*), never put together from parts.
  const verdictText = say(`windows.${verdict === "no_clear_difference" ? "unclear" : verdict}_${overlap ? "overlap" : "apart"}`);
  return { ...base, difference: d.difference, differenceLower: d.lower, differenceUpper: d.upper, intervalsOverlap: overlap, verdict, verdictText };
}

/** The record window: UTC dates, inclusive; by default the last WINDOW_RECORD_DAYS days up to today. */
export function recordWindow(query: { from?: string; to?: string }, now = Date.now()) {
  const to = query.to ?? day(now);
  const from = query.from ?? day(Date.parse(`${to}T00:00:00Z`) - (WINDOW_RECORD_DAYS - 1) * DAY);
  if (from > to) throw badRequest(said("windows.startAfterEnd"), { field: "from" });
  return { from, to, fromMs: Date.parse(`${from}T00:00:00Z`), toMs: Date.parse(`${to}T00:00:00Z`) + DAY };
}

// The records of the live rules, kept until something they depend on changes.
const CACHE_MAX = 8;
const CACHE_AGE_MS = 10 * 60_000;
const recordCache = new Map<string, { at: number; counts: Promise<Map<number, Counts>> }>();

function dataFingerprint(sqlite: Database.Database): string {
  const version = (sqlite.prepare("select version from report_cache_state where id = 1").pluck().get() as number | undefined) ?? -1;
  const d = sqlite.prepare("select count(*), max(id), max(updated_at), sum(deleted_at is not null) from defects").raw().get() as unknown[];
  return `${version}|${d.join(",")}`;
}

/** The counts, shared by requests asking at the same time (one pass, not one per request). */
function cachedCounts(sqlite: Database.Database, rules: Rule[], fromMs: number, toMs: number): Promise<Map<number, Counts>> {
  const key = `${databaseIdOf(sqlite)}|${fromMs}|${toMs}|${dataFingerprint(sqlite)}|${rules.map((r) => `${r.id}@${r.updatedAt}`).join(",")}`;
  const hit = recordCache.get(key);
  if (hit && Date.now() - hit.at < CACHE_AGE_MS) return hit.counts;
  const counts = countRecords(sqlite, rules, fromMs, toMs);
  counts.catch(() => recordCache.delete(key));
  recordCache.delete(key);
  recordCache.set(key, { at: Date.now(), counts });
  while (recordCache.size > CACHE_MAX) recordCache.delete(recordCache.keys().next().value!);
  return counts;
}

// ------------------------------------------------------------------------------------------------
// Answers
// ------------------------------------------------------------------------------------------------

function toWindow(sqlite: Database.Database, r: Rule, record: WindowRecord | null): OperatingWindow {
  const conditions = (r.conditions ?? []).map((c) => {
    const v = VARIABLES.find((x) => x.key === c.variable)!;
    return { ...c, label: v.label, unit: v.unit === "–" ? null : v.unit, text: conditionText(c) };
  });
  return {
    id: r.id,
    name: r.name,
    familyCode: r.familyCode,
    familyName: r.familyName,
    target:
      r.targetKind && r.targetCode ? { kind: r.targetKind, code: r.targetCode, name: targetName(sqlite, r.targetKind, r.targetCode) ?? r.targetCode } : null,
    conditions,
    text: r.conditions ? conditionsText(r.conditions) : "(the stored conditions could not be read: the rule flags nothing)",
    note: r.note,
    createdByName: r.createdByName,
    createdAt: iso(r.createdAt)!,
    updatedAt: iso(r.updatedAt)!,
    retiredAt: iso(r.retiredAt),
    record,
  };
}

export async function listWindows(db: Db, query: z.output<typeof windowListQuerySchema>) {
  const sqlite = db.$client;
  const w = recordWindow(query);
  const rules = loadRules(sqlite, query.includeRetired === "true" ? "1" : "w.retired_at is null");
  const live = rules.filter((r) => r.retiredAt === null);
  const counts = await cachedCounts(sqlite, live, w.fromMs, w.toMs);
  return {
    items: rules.map((r) => toWindow(sqlite, r, r.retiredAt === null ? windowRecord(counts.get(r.id)!, w.from, w.to) : null)),
    from: w.from,
    to: w.to,
    liveLimit: MAX_LIVE_WINDOWS,
    caution: WINDOW_CAUTION,
  };
}

async function getWindow(db: Db, id: number): Promise<OperatingWindow> {
  const sqlite = db.$client;
  const r = loadRules(sqlite, "w.id = ?", id)[0];
  if (!r) throw notFound(said("windows.noRule"));
  if (r.retiredAt !== null) return toWindow(sqlite, r, null);
  const w = recordWindow({});
  return toWindow(sqlite, r, windowRecord((await cachedCounts(sqlite, [r], w.fromMs, w.toMs)).get(r.id)!, w.from, w.to));
}

function familyIdOf(sqlite: Database.Database, code: string | null): number | null {
  if (code === null) return null;
  const id = sqlite.prepare("select id from grade_families where upper(code) = upper(?)").pluck().get(code) as number | undefined;
  if (id === undefined) throw badRequest(said("windows.noFamily", { code }), { field: "familyCode" }, "unknown_family");
  return id;
}

function checkTarget(sqlite: Database.Database, target: { kind: "type" | "category"; code: string } | null) {
  if (target === null) return;
  if (targetName(sqlite, target.kind, target.code) === null) {
    throw badRequest(said(target.kind === "type" ? "windows.noType" : "windows.noCategory", { code: target.code }), { field: "target" }, "unknown_target");
  }
}

function nameTaken(sqlite: Database.Database, name: string, exceptId = 0) {
  if (sqlite.prepare("select 1 from operating_windows where retired_at is null and lower(name) = lower(?) and id <> ?").get(name, exceptId)) {
    throw conflict(said("windows.nameTaken", { name }), { field: "name" });
  }
}

type CreateInput = z.output<typeof createWindowSchema>;

function insertWindow(db: Db, who: { id: string | null; actor?: string }, input: CreateInput): number {
  const sqlite = db.$client;
  const familyId = familyIdOf(sqlite, input.familyCode);
  checkTarget(sqlite, input.target);
  const live = sqlite.prepare("select count(*) from operating_windows where retired_at is null").pluck().get() as number;
  if (live >= MAX_LIVE_WINDOWS)
    throw conflict(said("windows.tooMany", { n: MAX_LIVE_WINDOWS }), {
      limit: MAX_LIVE_WINDOWS,
    });
  nameTaken(sqlite, input.name);
  const now = Date.now();
  const byName = who.id ? ((sqlite.prepare("select name from user where id = ?").pluck().get(who.id) as string | undefined) ?? null) : null;
  const id = Number(
    sqlite
      .prepare(
        `insert into operating_windows (name, family_id, target_kind, target_code, conditions, note, created_by, created_by_name, created_at, updated_at)
         values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
      )
      .run(
        input.name,
        familyId,
        input.target?.kind ?? null,
        input.target?.code.toUpperCase() ?? null,
        JSON.stringify(input.conditions),
        input.note ?? null,
        who.id,
        byName,
        now,
        now,
      ).lastInsertRowid,
  );
  recordAudit(db, { userId: who.id, actor: who.actor ?? null, action: "operating_window.create", entity: "operating_window", entityId: id, after: input });
  return id;
}

export function createWindow(db: Db, user: Actor, input: CreateInput): Promise<OperatingWindow> {
  const id = db.transaction(() => insertWindow(db, { id: user.id }, input));
  return getWindow(db, id);
}

export function updateWindow(db: Db, user: Actor, id: number, input: z.output<typeof updateWindowSchema>): Promise<OperatingWindow> {
  const sqlite = db.$client;
  db.transaction(() => {
    const before = sqlite.prepare("select * from operating_windows where id = ?").get(id) as Row | undefined;
    if (!before) throw notFound(said("windows.noRule"));
    if (before.retired_at != null) throw conflict(said("windows.retired"));
    const sets: string[] = [];
    const args: unknown[] = [];
    if (input.name !== undefined) {
      nameTaken(sqlite, input.name, id);
      sets.push("name = ?");
      args.push(input.name);
    }
    if (input.familyCode !== undefined) (sets.push("family_id = ?"), args.push(familyIdOf(sqlite, input.familyCode)));
    if (input.target !== undefined) {
      checkTarget(sqlite, input.target);
      sets.push("target_kind = ?", "target_code = ?");
      args.push(input.target?.kind ?? null, input.target?.code.toUpperCase() ?? null);
    }
    if (input.conditions !== undefined) (sets.push("conditions = ?"), args.push(JSON.stringify(input.conditions)));
    if (input.note !== undefined) (sets.push("note = ?"), args.push(input.note));
    // Strictly later than before, so a record kept for the old rule is never read for the new one.
    sets.push("updated_at = ?");
    args.push(Math.max(Date.now(), before.updated_at + 1), id);
    sqlite.prepare(`update operating_windows set ${sets.join(", ")} where id = ?`).run(...args);
    recordAudit(db, {
      userId: user.id,
      action: "operating_window.update",
      entity: "operating_window",
      entityId: id,
      before: {
        name: before.name,
        familyId: before.family_id,
        targetKind: before.target_kind,
        targetCode: before.target_code,
        conditions: parseConditions(before.conditions),
        note: before.note,
      },
      after: input,
    });
  });
  return getWindow(db, id);
}

export function retireWindow(db: Db, user: Actor, id: number) {
  const sqlite = db.$client;
  const at = Date.now();
  db.transaction(() => {
    const before = sqlite.prepare("select id, name, retired_at from operating_windows where id = ?").get(id) as Row | undefined;
    if (!before) throw notFound(said("windows.noRule"));
    if (before.retired_at != null) throw conflict(said("windows.alreadyRetired", { name: before.name }));
    sqlite.prepare("update operating_windows set retired_at = ?, updated_at = ? where id = ?").run(at, at, id);
    recordAudit(db, {
      userId: user.id,
      action: "operating_window.retire",
      entity: "operating_window",
      entityId: id,
      before: { name: before.name },
      after: { retiredAt: at },
    });
  });
  return { id, retired: true as const, retiredAt: iso(at)! };
}

/** The flags of the slabs given by their plant ids, or of every slab of a heat. */
export function windowFlags(db: Db, query: z.output<typeof windowFlagsQuerySchema>): WindowFlags {
  const sqlite = db.$client;
  let slabs: { id: number; slab_id: string; heat_no: string }[];
  if (query.heatNo !== undefined) {
    const heat = sqlite.prepare("select id from heats where heat_no = ?").pluck().get(query.heatNo) as number | undefined;
    if (heat === undefined) throw notFound(said("heats.noHeat", { heat: query.heatNo }));
    slabs = sqlite
      .prepare(
        "select s.id, s.slab_id, h.heat_no from slabs s join heats h on h.id = s.heat_id where s.heat_id = ? order by s.strand_id, s.piece_no, s.id limit ?",
      )
      .all(heat, MAX_FLAG_SLABS) as typeof slabs;
  } else {
    const ids = [
      ...new Set(
        (query.slabIds ?? "")
          .split(",")
          .map((s) => s.trim())
          .filter(Boolean),
      ),
    ].slice(0, MAX_FLAG_SLABS);
    slabs = ids.length
      ? (sqlite
          .prepare(`select s.id, s.slab_id, h.heat_no from slabs s join heats h on h.id = s.heat_id where s.slab_id in (${ids.map(() => "?").join(",")})`)
          .all(...ids) as typeof slabs)
      : [];
  }
  const flags = windowFlagsForSlabs(
    db,
    slabs.map((s) => s.id),
  );
  return { items: slabs.map((s) => ({ slabId: s.slab_id, heatNo: s.heat_no, rules: flags.get(s.id) ?? [] })), caution: WINDOW_CAUTION };
}

/**
 * The demo plant's rules (invented): one the demo history bears out (slag spots on peritectic grades
 * come with fast casting and the brake off or low), one it does not (their longitudinal facial cracks
 * do not follow superheat in the demo), and one for every family (cracks with a restless mold level).
 */
export function seedOperatingWindows(db: Db, processUserId: string) {
  const rules: CreateInput[] = [
    {
      name: "Fast casting with the brake off or low",
      familyCode: "PER",
      target: { kind: "type", code: "SLG" },
      conditions: [
        { variable: "casting_speed_m_min", op: "above", value: 1.5 },
        { variable: "embr_current_a", op: "below", value: 150 },
      ],
      note: "Written after the slag-spot campaign on structural grades.",
    },
    {
      name: "Hot tundish on peritectic grades",
      familyCode: "PER",
      target: { kind: "type", code: "LFC" },
      conditions: [{ variable: "superheat_c", op: "above", value: 30 }],
      note: "Suspected from the shell-thickness argument; not yet borne out.",
    },
    {
      name: "Restless mold level",
      familyCode: null,
      target: { kind: "category", code: "CRACK" },
      conditions: [{ variable: "mold_level_sd_mm", op: "above", value: 3.5 }],
      note: null,
    },
  ];
  db.transaction(() => {
    for (const r of rules) insertWindow(db, { id: processUserId, actor: "seed" }, r);
  });
  return rules.length;
}
