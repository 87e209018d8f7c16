/**
 * Investigations: problem statement, subjects (defects, heats), participants, hypotheses, actions
 * with owner, due date and status, attachments, and a closure that names the confirmed cause. Each
 * change is one transaction with its audit row; mail (action assigned, closed) is queued inside it.
 */
import type Database from "better-sqlite3";
import type { z } from "zod";
import type {
  Investigation,
  InvestigationSummary,
  actionCreateSchema,
  actionUpdateSchema,
  closeInvestigationSchema,
  hypothesisCreateSchema,
  hypothesisUpdateSchema,
  investigationCreateSchema,
  investigationQuerySchema,
  investigationUpdateSchema,
  subjectsAddSchema,
} from "@shared/api/investigations";
import { can, parseRoles } from "@shared/roles";
import type { Db } from "../db/client";
import { badRequest, conflict, notFound, said } from "../lib/http-error";
import type { Notifications } from "../mail/notifications";
import { recordAudit } from "./audit.service";
import { causesBrief } from "./causes.service";

type Row = Record<string, any>;
interface Actor {
  id: string;
}

const iso = (ms: number | null | undefined) => (ms == null ? null : new Date(ms).toISOString());
/** Today's date in UTC, as the due dates are written (YYYY-MM-DD). */
export const todayIso = (now = Date.now()) => new Date(now).toISOString().slice(0, 10);

function person(sqlite: Database.Database, id: string | null | undefined) {
  if (!id) return null;
  const u = sqlite.prepare("select id, name, email from user where id = ?").get(id) as Row | undefined;
  return u ? { id: u.id as string, name: u.name as string, email: u.email as string } : null;
}

/** People who may own actions or follow investigations: every active user of an office role. */
export function people(db: Db) {
  return (db.$client.prepare("select id, name, email, role from user where coalesce(banned, 0) = 0 order by name").all() as Row[])
    .filter((u) => can(parseRoles(u.role), "investigations.read"))
    .map((u) => ({ id: u.id as string, name: u.name as string, email: u.email as string }));
}

function checkPerson(sqlite: Database.Database, id: string, field: string) {
  const u = sqlite.prepare("select id, role, banned from user where id = ?").get(id) as Row | undefined;
  if (!u || u.banned) throw badRequest(said("investigations.notActive"), { field });
  if (!can(parseRoles(u.role), "investigations.read")) throw badRequest(said("investigations.roleCannotOpen"), { field });
}

function loadInv(sqlite: Database.Database, id: number): Row {
  const inv = sqlite.prepare("select * from investigations where id = ?").get(id) as Row | undefined;
  if (!inv) throw notFound(said("investigations.noInvestigation"));
  return inv;
}

function openInv(sqlite: Database.Database, id: number): Row {
  const inv = loadInv(sqlite, id);
  if (inv.status === "closed") throw conflict(said("investigations.closed", { ref: inv.ref }));
  return inv;
}

function heatIds(sqlite: Database.Database, heatNos: string[]): number[] {
  const out: number[] = [];
  const missing: string[] = [];
  for (const h of new Set(heatNos.map((x) => x.trim().toUpperCase()))) {
    const id = sqlite.prepare("select id from heats where heat_no = ?").pluck().get(h) as number | undefined;
    if (id === undefined) missing.push(h);
    else out.push(id);
  }
  if (missing.length) throw badRequest(said("investigations.noHeats", { heats: missing.join(", ") }), { field: "heatNos", missing });
  return out;
}

function defectIds(sqlite: Database.Database, ids: number[]): number[] {
  const unique = [...new Set(ids)];
  if (unique.length === 0) return [];
  const found = new Set(
    sqlite
      .prepare(`select id from defects where deleted_at is null and id in (${unique.map(() => "?").join(",")})`)
      .pluck()
      .all(...unique) as number[],
  );
  const missing = unique.filter((i) => !found.has(i));
  if (missing.length) throw badRequest(said("investigations.noDefects", { ids: missing.slice(0, 10).join(", ") }), { field: "defectIds", missing });
  return unique;
}

function addSubjects(sqlite: Database.Database, invId: number, defects: number[], heats: number[]) {
  const haveD = new Set(
    sqlite.prepare("select defect_id from investigation_subjects where investigation_id = ? and defect_id is not null").pluck().all(invId) as number[],
  );
  const haveH = new Set(
    sqlite.prepare("select heat_id from investigation_subjects where investigation_id = ? and heat_id is not null").pluck().all(invId) as number[],
  );
  const ins = sqlite.prepare("insert into investigation_subjects (investigation_id, defect_id, heat_id) values (?, ?, ?)");
  let added = 0;
  for (const d of defects) if (!haveD.has(d)) (ins.run(invId, d, null), added++);
  for (const h of heats) if (!haveH.has(h)) (ins.run(invId, null, h), added++);
  return added;
}

function addParticipants(sqlite: Database.Database, invId: number, userIds: string[]) {
  const ins = sqlite.prepare("insert or ignore into investigation_participants (investigation_id, user_id, added_at) values (?, ?, ?)");
  for (const u of new Set(userIds)) {
    checkPerson(sqlite, u, "participantIds");
    ins.run(invId, u, Date.now());
  }
}

function nextRef(sqlite: Database.Database, now: number): string {
  const year = new Date(now).getUTCFullYear();
  const last = sqlite.prepare("select ref from investigations where ref like ? order by ref desc limit 1").pluck().get(`INV-${year}-%`) as string | undefined;
  const n = last ? Number(last.split("-")[2]) + 1 : 1;
  return `INV-${year}-${String(n).padStart(3, "0")}`;
}

const SUMMARY = `select i.*, t.code as causeCode, t.name as causeName,
    (select count(*) from investigation_subjects s where s.investigation_id = i.id and s.defect_id is not null) as nDefects,
    (select count(*) from investigation_subjects s where s.investigation_id = i.id and s.heat_id is not null) as nHeats,
    (select count(*) from investigation_actions a where a.investigation_id = i.id) as nActions,
    (select count(*) from investigation_actions a where a.investigation_id = i.id and a.status in ('open', 'in_progress')) as nOpen,
    (select count(*) from investigation_actions a where a.investigation_id = i.id and a.status in ('open', 'in_progress') and a.due_on < @today) as nOverdue
  from investigations i left join cause_tags t on t.id = i.confirmed_cause_tag_id`;

function toSummary(sqlite: Database.Database, r: Row): InvestigationSummary {
  return {
    id: r.id,
    ref: r.ref,
    title: r.title,
    status: r.status,
    owner: person(sqlite, r.owner_id),
    openedAt: iso(r.opened_at)!,
    closedAt: iso(r.closed_at),
    defects: r.nDefects,
    heats: r.nHeats,
    actions: { total: r.nActions, open: r.nOpen, overdue: r.status === "closed" ? 0 : r.nOverdue },
    confirmedCause: r.causeCode ? { code: r.causeCode, name: r.causeName } : null,
  };
}

export function listInvestigations(db: Db, q: z.output<typeof investigationQuerySchema>, now = Date.now()): InvestigationSummary[] {
  const sqlite = db.$client;
  const where: string[] = [];
  const params: Record<string, unknown> = { today: todayIso(now) };
  if (q.status === "active") where.push("i.status <> 'closed'");
  else if (q.status) (where.push("i.status = @status"), (params.status = q.status));
  if (q.heatNo) {
    where.push(`i.id in (select s.investigation_id from investigation_subjects s left join defects d on d.id = s.defect_id left join slabs sl on sl.id = d.slab_id
      where s.heat_id = (select id from heats where heat_no = @heatNo) or sl.heat_id = (select id from heats where heat_no = @heatNo))`);
    params.heatNo = q.heatNo.trim().toUpperCase();
  }
  const rows = sqlite
    .prepare(`${SUMMARY} ${where.length ? `where ${where.join(" and ")}` : ""} order by case i.status when 'closed' then 1 else 0 end, i.opened_at desc`)
    .all(params) as Row[];
  return rows.map((r) => toSummary(sqlite, r));
}

export function getInvestigation(db: Db, id: number, now = Date.now()): Investigation {
  const sqlite = db.$client;
  const r = sqlite.prepare(`${SUMMARY} where i.id = @id`).get({ id, today: todayIso(now) }) as Row | undefined;
  if (!r) throw notFound(said("investigations.noInvestigation"));
  const heats = sqlite
    .prepare(
      `select h.heat_no as heatNo, g.code as grade, h.cast_start as castStart from investigation_subjects s join heats h on h.id = s.heat_id join grades g on g.id = h.grade_id where s.investigation_id = ? order by h.cast_start`,
    )
    .all(id) as Row[];
  const defects = sqlite
    .prepare(
      `select d.id, sl.slab_id as slabId, h.heat_no as heatNo, t.code as type, t.name as typeName, d.severity, d.found_at as foundAt
       from investigation_subjects s join defects d on d.id = s.defect_id join slabs sl on sl.id = d.slab_id join heats h on h.id = sl.heat_id join defect_types t on t.id = d.type_id
       where s.investigation_id = ? order by d.found_at, d.id`,
    )
    .all(id) as Row[];
  const causes = causesBrief(
    sqlite,
    defects.map((d) => d.id as number),
  );
  const participants = (
    sqlite.prepare("select user_id from investigation_participants where investigation_id = ? order by added_at").pluck().all(id) as string[]
  )
    .map((u) => person(sqlite, u)!)
    .filter(Boolean);
  const hypotheses = sqlite
    .prepare(
      "select h.*, t.code as tagCode, t.name as tagName from investigation_hypotheses h left join cause_tags t on t.id = h.cause_tag_id where h.investigation_id = ? order by h.id",
    )
    .all(id) as Row[];
  const actions = sqlite.prepare("select * from investigation_actions where investigation_id = ? order by due_on, id").all(id) as Row[];
  const attachments = sqlite
    .prepare(
      "select a.*, u.name as byName from attachments a left join user u on u.id = a.created_by where owner_kind = 'investigation' and owner_id = ? order by a.created_at",
    )
    .all(id) as Row[];
  const history = sqlite
    .prepare(
      "select a.at, coalesce(a.user_name, u.name, a.actor) as byName, a.action from audit_log a left join user u on u.id = a.user_id where a.entity = 'investigation' and a.entity_id = ? order by a.at, a.id",
    )
    .all(String(id)) as Row[];
  const today = todayIso(now);
  return {
    ...toSummary(sqlite, r),
    problemStatement: r.problem_statement,
    closureNote: r.closure_note ?? null,
    subjects: {
      heats: heats.map((h) => ({ heatNo: h.heatNo, grade: h.grade, castStart: iso(h.castStart)! })),
      defects: defects.map((d) => ({
        ...d,
        foundAt: iso(d.foundAt)!,
        causes: (causes.get(d.id) ?? []).map((c) => c.tag),
      })) as Investigation["subjects"]["defects"],
    },
    participants: participants as Investigation["participants"],
    hypotheses: hypotheses.map((h) => ({
      id: h.id,
      statement: h.statement,
      causeTag: h.tagCode ?? null,
      causeTagName: h.tagName ?? null,
      status: h.status,
      createdAt: iso(h.created_at)!,
    })),
    actionList: actions.map((a) => ({
      id: a.id,
      description: a.description,
      owner: person(sqlite, a.owner_id),
      dueOn: a.due_on ?? null,
      status: a.status,
      overdue: r.status !== "closed" && (a.status === "open" || a.status === "in_progress") && a.due_on != null && a.due_on < today,
      completedAt: iso(a.completed_at),
    })),
    attachments: attachments.map((a) => ({
      id: a.id,
      fileName: a.file_name,
      mime: a.mime,
      bytes: a.bytes,
      url: `/api/attachments/${a.id}`,
      at: iso(a.created_at)!,
      by: a.byName ?? null,
    })),
    history: history.map((h) => ({ at: iso(h.at)!, by: h.byName ?? null, action: h.action })),
  };
}

const audit = (db: Db, user: Actor, invId: number, action: string, after?: unknown, before?: unknown) =>
  recordAudit(db, { userId: user.id, action, entity: "investigation", entityId: invId, after, before });

export function createInvestigation(db: Db, user: Actor, input: z.output<typeof investigationCreateSchema>): Investigation {
  const sqlite = db.$client;
  const id = db.transaction(() => {
    const defects = defectIds(sqlite, input.defectIds);
    const heats = heatIds(sqlite, input.heatNos);
    const owner = input.ownerId ?? user.id;
    checkPerson(sqlite, owner, "ownerId");
    const now = Date.now();
    const ref = nextRef(sqlite, now);
    const invId = Number(
      sqlite
        .prepare(
          "insert into investigations (ref, title, problem_statement, status, owner_id, opened_at, created_by, created_at, updated_at) values (?, ?, ?, 'open', ?, ?, ?, ?, ?)",
        )
        .run(ref, input.title, input.problemStatement, owner, now, user.id, now, now).lastInsertRowid,
    );
    addSubjects(sqlite, invId, defects, heats);
    addParticipants(sqlite, invId, input.participantIds);
    audit(db, user, invId, "investigation.open", { ref, title: input.title, defects, heats: input.heatNos, owner, participants: input.participantIds });
    return invId;
  });
  return getInvestigation(db, id);
}

export function updateInvestigation(db: Db, user: Actor, id: number, input: z.output<typeof investigationUpdateSchema>): Investigation {
  const sqlite = db.$client;
  db.transaction(() => {
    const inv = openInv(sqlite, id);
    if (input.ownerId) checkPerson(sqlite, input.ownerId, "ownerId");
    sqlite
      .prepare("update investigations set title = ?, problem_statement = ?, status = ?, owner_id = ?, updated_at = ? where id = ?")
      .run(
        input.title ?? inv.title,
        input.problemStatement ?? inv.problem_statement,
        input.status ?? inv.status,
        input.ownerId ?? inv.owner_id,
        Date.now(),
        id,
      );
    audit(db, user, id, "investigation.update", input, {
      title: inv.title,
      problemStatement: inv.problem_statement,
      status: inv.status,
      ownerId: inv.owner_id,
    });
  });
  return getInvestigation(db, id);
}

export function addInvestigationSubjects(db: Db, user: Actor, id: number, input: z.output<typeof subjectsAddSchema>): Investigation {
  const sqlite = db.$client;
  db.transaction(() => {
    openInv(sqlite, id);
    const added = addSubjects(sqlite, id, defectIds(sqlite, input.defectIds), heatIds(sqlite, input.heatNos));
    audit(db, user, id, "investigation.subjects.add", { ...input, added });
  });
  return getInvestigation(db, id);
}

export function addInvestigationParticipants(db: Db, user: Actor, id: number, userIds: string[]): Investigation {
  const sqlite = db.$client;
  db.transaction(() => {
    openInv(sqlite, id);
    addParticipants(sqlite, id, userIds);
    audit(db, user, id, "investigation.participants.add", { userIds });
  });
  return getInvestigation(db, id);
}

function tagId(sqlite: Database.Database, code: string | null | undefined, field: string): number | null {
  if (!code) return null;
  const t = sqlite.prepare("select id, retired_at from cause_tags where code = ?").get(code.trim().toLowerCase()) as Row | undefined;
  if (!t) throw badRequest(said("investigations.unknownTag", { code }), { field }, "unknown_tag");
  if (t.retired_at != null) throw badRequest(said("investigations.retiredTag", { code }), { field }, "retired_tag");
  return t.id;
}

export function addHypothesis(db: Db, user: Actor, id: number, input: z.output<typeof hypothesisCreateSchema>): Investigation {
  const sqlite = db.$client;
  db.transaction(() => {
    openInv(sqlite, id);
    const now = Date.now();
    sqlite
      .prepare(
        "insert into investigation_hypotheses (investigation_id, statement, cause_tag_id, status, created_by, created_at, updated_at) values (?, ?, ?, 'open', ?, ?, ?)",
      )
      .run(id, input.statement, tagId(sqlite, input.causeTag, "causeTag"), user.id, now, now);
    audit(db, user, id, "investigation.hypothesis.add", input);
  });
  return getInvestigation(db, id);
}

export function updateHypothesis(db: Db, user: Actor, id: number, hid: number, input: z.output<typeof hypothesisUpdateSchema>): Investigation {
  const sqlite = db.$client;
  db.transaction(() => {
    openInv(sqlite, id);
    const h = sqlite.prepare("select * from investigation_hypotheses where id = ? and investigation_id = ?").get(hid, id) as Row | undefined;
    if (!h) throw notFound(said("investigations.noHypothesis"));
    sqlite
      .prepare("update investigation_hypotheses set status = ?, statement = ?, updated_at = ? where id = ?")
      .run(input.status ?? h.status, input.statement ?? h.statement, Date.now(), hid);
    audit(db, user, id, "investigation.hypothesis.update", { id: hid, ...input }, { status: h.status, statement: h.statement });
  });
  return getInvestigation(db, id);
}

export function addAction(db: Db, user: Actor, notify: Notifications, id: number, input: z.output<typeof actionCreateSchema>): Investigation {
  const sqlite = db.$client;
  db.transaction(() => {
    const inv = openInv(sqlite, id);
    checkPerson(sqlite, input.ownerId, "ownerId");
    const now = Date.now();
    const aid = Number(
      sqlite
        .prepare(
          "insert into investigation_actions (investigation_id, description, owner_id, due_on, status, created_at, updated_at) values (?, ?, ?, ?, 'open', ?, ?)",
        )
        .run(id, input.description, input.ownerId, input.dueOn, now, now).lastInsertRowid,
    );
    audit(db, user, id, "investigation.action.add", { id: aid, ...input });
    notify.actionAssigned(inv, { description: input.description, owner_id: input.ownerId, due_on: input.dueOn });
  });
  return getInvestigation(db, id);
}

export function updateAction(db: Db, user: Actor, notify: Notifications, id: number, aid: number, input: z.output<typeof actionUpdateSchema>): Investigation {
  const sqlite = db.$client;
  db.transaction(() => {
    const inv = openInv(sqlite, id);
    const a = sqlite.prepare("select * from investigation_actions where id = ? and investigation_id = ?").get(aid, id) as Row | undefined;
    if (!a) throw notFound(said("investigations.noAction"));
    if (input.ownerId) checkPerson(sqlite, input.ownerId, "ownerId");
    const status = input.status ?? a.status;
    const done = status === "done" || status === "cancelled";
    const dueChanged = input.dueOn !== undefined && input.dueOn !== a.due_on;
    sqlite
      .prepare(
        "update investigation_actions set description = ?, owner_id = ?, due_on = ?, status = ?, completed_at = ?, overdue_notified_at = ?, updated_at = ? where id = ?",
      )
      .run(
        input.description ?? a.description,
        input.ownerId ?? a.owner_id,
        input.dueOn ?? a.due_on,
        status,
        done ? (a.completed_at ?? Date.now()) : null,
        // A new date or a new owner earns a fresh overdue reminder.
        dueChanged || (input.ownerId && input.ownerId !== a.owner_id) ? null : a.overdue_notified_at,
        Date.now(),
        aid,
      );
    audit(
      db,
      user,
      id,
      "investigation.action.update",
      { id: aid, ...input },
      { description: a.description, ownerId: a.owner_id, dueOn: a.due_on, status: a.status },
    );
    if (input.ownerId && input.ownerId !== a.owner_id && !done) {
      notify.actionAssigned(inv, { description: input.description ?? a.description, owner_id: input.ownerId, due_on: input.dueOn ?? a.due_on });
    }
  });
  return getInvestigation(db, id);
}

/** Everyone who followed the investigation: owner, opener, participants, action owners. */
function recipientsOf(sqlite: Database.Database, inv: Row): string[] {
  const ids = new Set<string>([inv.owner_id, inv.created_by].filter(Boolean));
  for (const u of sqlite.prepare("select user_id from investigation_participants where investigation_id = ?").pluck().all(inv.id) as string[]) ids.add(u);
  for (const u of sqlite
    .prepare("select owner_id from investigation_actions where investigation_id = ? and owner_id is not null")
    .pluck()
    .all(inv.id) as string[])
    ids.add(u);
  return [...ids]
    .map((u) => sqlite.prepare("select email from user where id = ? and coalesce(banned, 0) = 0").pluck().get(u) as string | undefined)
    .filter((e): e is string => !!e);
}

export function closeInvestigation(db: Db, user: Actor, notify: Notifications, id: number, input: z.output<typeof closeInvestigationSchema>): Investigation {
  const sqlite = db.$client;
  db.transaction(() => {
    const inv = openInv(sqlite, id);
    const tag = tagId(sqlite, input.confirmedCause, "confirmedCause")!;
    const now = Date.now();
    sqlite
      .prepare("update investigations set status = 'closed', closed_at = ?, confirmed_cause_tag_id = ?, closure_note = ?, updated_at = ? where id = ?")
      .run(now, tag, input.closureNote, now, id);
    audit(db, user, id, "investigation.close", input, { status: inv.status });
    // Actions still open when it closes are cancelled with it (the form says so before): a closed
    // investigation leaves nothing to do and no reminder to come; each in the record of changes.
    const open = sqlite
      .prepare("select id, status from investigation_actions where investigation_id = ? and status in ('open', 'in_progress') order by id")
      .all(id) as { id: number; status: string }[];
    const cancel = sqlite.prepare("update investigation_actions set status = 'cancelled', completed_at = ?, updated_at = ? where id = ?");
    for (const a of open) {
      cancel.run(now, now, a.id);
      audit(db, user, id, "investigation.action.update", { actionId: a.id, status: "cancelled" }, { status: a.status });
    }
    const cause = sqlite.prepare("select code, name from cause_tags where id = ?").get(tag) as { code: string; name: string };
    notify.investigationClosed({ ...inv, closure_note: input.closureNote }, cause, recipientsOf(sqlite, inv));
  });
  return getInvestigation(db, id);
}

/** Queues one reminder per overdue action (open or under way, due before today, not yet reminded). */
export function queueOverdueReminders(db: Db, notify: Notifications, now = Date.now()): number {
  const sqlite = db.$client;
  const due = sqlite
    .prepare(
      `select a.*, i.ref, i.title, i.id as invId from investigation_actions a join investigations i on i.id = a.investigation_id
       where i.status <> 'closed' and a.status in ('open', 'in_progress') and a.due_on < ? and a.overdue_notified_at is null and a.owner_id is not null`,
    )
    .all(todayIso(now)) as Row[];
  if (due.length === 0) return 0;
  db.transaction(() => {
    for (const a of due) {
      notify.actionOverdue({ id: a.invId, ref: a.ref, title: a.title }, a);
      sqlite.prepare("update investigation_actions set overdue_notified_at = ? where id = ?").run(now, a.id);
    }
  });
  return due.length;
}

export function investigationForOpen(db: Db, id: number) {
  return openInv(db.$client, id);
}
