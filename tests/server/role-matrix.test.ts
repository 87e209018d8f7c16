import { afterAll, beforeAll, describe, expect, it } from "vitest";
import fs from "node:fs";
import path from "node:path";
import request from "supertest";
import type { AnyRoute } from "../../server/lib/route";
import { ROLES, type Role } from "../../shared/roles";
import { buildConfoundedPlant } from "../helpers/confounded-plant";
import { createTestApp, TEST_PASSWORD, type TestApp } from "../helpers/test-app";

/**
 * Every route the app serves × signed out and each of the five roles. The expected answer of each
 * cell is written out here by hand — not derived from the server's own capability table — so a
 * wrong policy in shared/roles.ts fails this test. A new route fails it until it has a row below.
 */
let t: TestApp;
let agents: Record<Role, request.Agent>;
let counter = 0;

type Who = Role | "public" | "signed-in";
interface Row {
  /** Who gets 2xx; everyone else signed in gets 403, signed out gets 401. */
  allowed: Who[];
  /** Reached with an API token only: every session, whatever its role, gets 401. */
  tokenOnly?: boolean;
  sample: (t: TestApp) => { path: string; body?: unknown; file?: Buffer; files?: Buffer; photo?: boolean };
}

const SETUP: Role[] = ["process", "admin"];
const LOGGERS: Role[] = ["inspector", "quality", "admin"];
const REVIEWERS: Role[] = ["quality", "admin"];
const heatCsv = () => Buffer.from(`heat_no,caster,grade,cast_start,casting_speed_m_min\nMATRIX${++counter},CC2,LV-ST32,2026-12-05T08:00:00Z,1.4\n`);

const EVERY_ROLE: Role[] = ["inspector", "quality", "process", "claims", "admin"];

const matrix: Record<string, Row> = {
  "GET /health": { allowed: ["public"], sample: () => ({ path: "/api/health" }) },
  "GET /about": { allowed: ["public"], sample: () => ({ path: "/api/about" }) },
  "GET /session": { allowed: ["public"], sample: () => ({ path: "/api/session" }) },
  "GET /me": { allowed: ["signed-in"], sample: () => ({ path: "/api/me" }) },
  "GET /admin/users": { allowed: ["admin"], sample: () => ({ path: "/api/admin/users" }) },
  "POST /admin/users": {
    allowed: ["admin"],
    sample: () => ({
      path: "/api/admin/users",
      body: { name: "Matrix User", email: `matrix${++counter}@example.test`, roles: ["inspector"], password: "long-enough-pw" },
    }),
  },
  "PATCH /admin/users/:id": {
    allowed: ["admin"],
    sample: (t) => {
      const id = t.db.$client.prepare("select id from user where email = 'claims@demo.test'").pluck().get() as string;
      return { path: `/api/admin/users/${id}`, body: { name: "Clara Mbeki (demo claims officer)" } };
    },
  },
  "POST /admin/users/:id/unlock": {
    allowed: ["admin"],
    sample: (t) => {
      // A lock to lift: five wrong passwords for the process engineer from one address.
      for (let i = 0; i < 5; i++) t.auth.signInGuard.failed("process@demo.test", "192.0.2.50");
      const id = t.db.$client.prepare("select id from user where email = 'process@demo.test'").pluck().get() as string;
      return { path: `/api/admin/users/${id}/unlock` };
    },
  },
  "POST /me/password": {
    allowed: ["signed-in"],
    sample: () => {
      // Each role changes its own password again on every call (the agent keeps the fresh session cookie).
      const current = currentRole ? (ownPasswords[currentRole] ?? TEST_PASSWORD) : TEST_PASSWORD;
      const next = `matrix-own-password-${++counter}`;
      if (currentRole) ownPasswords[currentRole] = next;
      return { path: "/api/me/password", body: { currentPassword: current, newPassword: next } };
    },
  },
  "PUT /me/language": { allowed: ["signed-in"], sample: () => ({ path: "/api/me/language", body: { language: counter++ % 2 ? "de" : "en" } }) },
  "GET /slabs/search": { allowed: EVERY_ROLE, sample: () => ({ path: "/api/slabs/search?q=L26" }) },
  "GET /plant/summary": { allowed: EVERY_ROLE, sample: () => ({ path: "/api/plant/summary" }) },
  "GET /plant/setup": { allowed: EVERY_ROLE, sample: () => ({ path: "/api/plant/setup" }) },
  "GET /heats": { allowed: ["quality", "process", "claims", "admin"], sample: () => ({ path: "/api/heats?pageSize=5" }) },
  "GET /heats/:heatNo": { allowed: EVERY_ROLE, sample: (t) => ({ path: `/api/heats/${firstHeat(t)}` }) },
  "GET /heats/:heatNo/samples": { allowed: EVERY_ROLE, sample: (t) => ({ path: `/api/heats/${firstHeat(t)}/samples` }) },
  "GET /slabs/:slabId": { allowed: EVERY_ROLE, sample: (t) => ({ path: `/api/slabs/${firstSlab(t)}` }) },
  "POST /import/:kind": { allowed: ["process", "admin"], sample: () => ({ path: "/api/import/heats?dryRun=true", file: heatCsv() }) },
  "GET /import/templates/:kind.xlsx": { allowed: ["process", "admin"], sample: () => ({ path: "/api/import/templates/slabs.xlsx" }) },
  "GET /import/runs": { allowed: ["process", "admin"], sample: () => ({ path: "/api/import/runs" }) },
  "POST /ingest/:kind": { allowed: [], tokenOnly: true, sample: () => ({ path: "/api/ingest/heats?dryRun=true", body: [] }) },
  "GET /admin/sign-in": { allowed: ["admin"], sample: () => ({ path: "/api/admin/sign-in" }) },
  "PUT /admin/sign-in": {
    allowed: ["admin"],
    sample: () => ({ path: "/api/admin/sign-in", body: { groupRoles: [{ group: `matrix-${++counter}`, roles: ["inspector"] }], localPasswords: "everyone" } }),
  },
  "GET /admin/tokens": { allowed: ["admin"], sample: () => ({ path: "/api/admin/tokens" }) },
  "POST /admin/tokens": { allowed: ["admin"], sample: () => ({ path: "/api/admin/tokens", body: { name: `matrix ${++counter}` } }) },
  "DELETE /admin/tokens/:id": {
    allowed: ["admin"],
    sample: (t) => {
      const id = Number(
        t.db.$client.prepare("insert into api_tokens (name, token_hash, prefix) values ('m', ?, 'ssk_m')").run(`h${++counter}`).lastInsertRowid,
      );
      return { path: `/api/admin/tokens/${id}` };
    },
  },
  "GET /plant/settings": { allowed: EVERY_ROLE, sample: () => ({ path: "/api/plant/settings" }) },
  "PUT /plant/settings": {
    allowed: SETUP,
    sample: () => ({
      path: "/api/plant/settings",
      body: {
        liquidus: { baseC: 1536, perPct: { c: 78, si: 7.6, mn: 4.9, p: 34.4, s: 38 } },
        shellK: { moldMmPerSqrtMin: 20, strandMmPerSqrtMin: 27 },
        density: { solidTPerM3: 7.8, liquidTPerM3: 7.0 },
        steelProperties: { conductivitySPerM: 714000, densityKgPerM3: 7000, viscosityPaS: 0.0063 },
      },
    }),
  },
  "PATCH /plant/strands/:id": { allowed: SETUP, sample: (t) => ({ path: `/api/plant/strands/${firstStrand(t)}`, body: { embrPositionMm: 450 } }) },
  "POST /plant/casters": {
    allowed: SETUP,
    sample: () => ({
      path: "/api/plant/casters",
      body: {
        code: `MX${++counter}`,
        name: "Matrix caster",
        worksName: "Matrix works (invented)",
        strands: [
          {
            strandNo: 1,
            moldThicknessMm: 220,
            moldEffectiveLengthMm: 800,
            senPortAreaMm2: 6000,
            embrCalibration: { kind: "linear", teslaPerAmp: 0.0007, offsetT: 0 },
          },
        ],
      },
    }),
  },
  "POST /plant/grade-families": {
    allowed: SETUP,
    sample: () => ({ path: "/api/plant/grade-families", body: { code: `MF${++counter}`, name: "Matrix family" } }),
  },
  "PATCH /plant/grade-families/:code": { allowed: SETUP, sample: () => ({ path: "/api/plant/grade-families/PER", body: { name: "Peritectic" } }) },
  "POST /plant/grades": {
    allowed: SETUP,
    sample: () => ({ path: "/api/plant/grades", body: { code: `MG${++counter}`, name: "Matrix grade", familyCode: "LC" } }),
  },
  "PATCH /plant/grades/:code": { allowed: SETUP, sample: () => ({ path: "/api/plant/grades/LV-DQ10", body: { name: "Drawing quality" } }) },
  "POST /defects": {
    allowed: LOGGERS,
    sample: (t) => ({
      path: "/api/defects",
      body: {
        slab_id: slabRow(t),
        type_code: "SLG",
        face: "inner",
        position_along_mm: 100,
        position_across_mm: 100,
        severity: 1,
        disposition: "accept",
        client_key: `matrix-${++counter}-key`,
      },
    }),
  },
  "GET /defects": { allowed: EVERY_ROLE, sample: () => ({ path: "/api/defects?pageSize=5" }) },
  "GET /defects/:id": { allowed: EVERY_ROLE, sample: (t) => ({ path: `/api/defects/${defectOf(t, "inspector@demo.test")}` }) },
  "PATCH /defects/:id": { allowed: LOGGERS, sample: (t) => ({ path: `/api/defects/${ownDefect(t)}`, body: { note: "matrix" } }) },
  "DELETE /defects/:id": { allowed: LOGGERS, sample: (t) => ({ path: `/api/defects/${ownDefect(t)}` }) },
  "POST /defects/:id/review": {
    allowed: REVIEWERS,
    sample: (t) => ({ path: `/api/defects/${defectOf(t, "inspector@demo.test")}/review`, body: { decision: "confirm" } }),
  },
  "POST /defects/:id/photos": { allowed: LOGGERS, sample: (t) => ({ path: `/api/defects/${ownDefect(t)}/photos`, photo: true }) },
  "GET /photos/:id": { allowed: EVERY_ROLE, sample: () => ({ path: `/api/photos/00000000-0000-4000-8000-000000000001` }) },
  "GET /photos/:id/thumb": { allowed: EVERY_ROLE, sample: () => ({ path: `/api/photos/00000000-0000-4000-8000-000000000001/thumb` }) },
  "DELETE /photos/:id": { allowed: LOGGERS, sample: (t) => ({ path: `/api/photos/${photoOf(t, ownDefect(t))}` }) },
  "GET /defect-types": { allowed: EVERY_ROLE, sample: () => ({ path: "/api/defect-types" }) },
  "POST /defect-types": {
    allowed: REVIEWERS,
    sample: () => ({ path: "/api/defect-types", body: { code: `MT${++counter}`, name: "Matrix type", categoryCode: "SURFACE" } }),
  },
  "PATCH /defect-types/:code": { allowed: REVIEWERS, sample: () => ({ path: "/api/defect-types/SCB", body: { name: "Scab" } }) },
  "POST /defect-categories": {
    allowed: REVIEWERS,
    sample: () => ({ path: "/api/defect-categories", body: { code: `MC${++counter}`, name: "Matrix category" } }),
  },
  "PATCH /defect-categories/:code": { allowed: REVIEWERS, sample: () => ({ path: "/api/defect-categories/SURFACE", body: { name: "Other surface defects" } }) },
  "GET /reports/variables": { allowed: ["quality", "process", "claims", "admin"], sample: () => ({ path: "/api/reports/variables" }) },
  "GET /saved-reports": { allowed: ["quality", "process", "claims", "admin"], sample: () => ({ path: "/api/saved-reports" }) },
  "POST /saved-reports": {
    allowed: ["quality", "process", "claims", "admin"],
    sample: () => ({ path: "/api/saved-reports", body: { name: `matrix ${++counter}`, reportKind: "overview", query: "period=week" } }),
  },
  "DELETE /saved-reports/:id": {
    allowed: ["quality", "process", "claims", "admin"],
    sample: (t) => {
      const userId = t.db.$client
        .prepare("select id from user where email = ?")
        .pluck()
        .get(`${currentRole ?? "quality"}@demo.test`);
      const id = Number(
        t.db.$client.prepare("insert into saved_reports (user_id, name, report_kind, query) values (?, 'm', 'overview', '')").run(userId).lastInsertRowid,
      );
      return { path: `/api/saved-reports/${id}` };
    },
  },
};

const slabRow = (t: TestApp) => t.db.$client.prepare("select slab_id from slabs order by id limit 1 offset 1").pluck().get() as string;
/** A fresh defect by the given role (so "own and unreviewed" holds for inspectors). */
function defectOf(t: TestApp, email: string) {
  const userId = t.db.$client.prepare("select id from user where email = ?").pluck().get(email) as string;
  const slab = t.db.$client.prepare("select id from slabs order by id limit 1 offset 1").pluck().get() as number;
  const type = t.db.$client.prepare("select id from defect_types where code = 'SLG'").pluck().get() as number;
  return Number(
    t.db.$client
      .prepare(
        "insert into defects (slab_id, type_id, face, position_along_mm, position_across_mm, severity, stage, disposition, found_at, created_by) values (?, ?, 'inner', 100, 100, 1, 'slab_yard', 'accept', ?, ?)",
      )
      .run(slab, type, Date.now(), userId).lastInsertRowid,
  );
}
let currentRole: Role | null = null;
/** Each role's password once POST /me/password has changed it. */
const ownPasswords: Partial<Record<Role, string>> = {};
const ownDefect = (t: TestApp) => defectOf(t, `${currentRole ?? "inspector"}@demo.test`);
const photoOf = (t: TestApp, defectId: number) => {
  const id = crypto.randomUUID();
  t.db.$client
    .prepare(
      "insert into defect_photos (id, defect_id, display_file, display_mime, thumb_file, width, height, bytes, sha256) values (?, ?, ?, 'image/webp', ?, 10, 10, 1, 'x')",
    )
    .run(id, defectId, `photos/${id}.webp`, `photos/${id}.thumb.jpg`);
  return id;
};
let photoFileMade = false;
async function realPhoto(t: TestApp) {
  // One real stored photo for the GET routes.
  if (!photoFileMade) {
    const fs = await import("node:fs");
    const path = await import("node:path");
    const sharp = (await import("sharp")).default;
    const id = "00000000-0000-4000-8000-000000000001";
    const dir = path.join(t.env.UPLOAD_DIR, "photos");
    fs.mkdirSync(dir, { recursive: true });
    const img = await sharp({ create: { width: 4, height: 4, channels: 3, background: "#000" } })
      .webp()
      .toBuffer();
    fs.writeFileSync(path.join(dir, `${id}.webp`), img);
    fs.writeFileSync(path.join(dir, `${id}.thumb.jpg`), await sharp(img).jpeg().toBuffer());
    t.db.$client
      .prepare(
        "insert into defect_photos (id, defect_id, display_file, display_mime, thumb_file, width, height, bytes, sha256) values (?, ?, ?, 'image/webp', ?, 4, 4, 1, 'x')",
      )
      .run(id, defectOf(t, "inspector@demo.test"), `photos/${id}.webp`, `photos/${id}.thumb.jpg`);
    photoFileMade = true;
  }
  return "00000000-0000-4000-8000-000000000001";
}

const READERS: Role[] = ["quality", "process", "claims", "admin"];
const REPORT_QUERIES: Record<string, string> = {
  overview: "period=week",
  "rate-by-variable": "variable=casting_speed_m_min",
  screening: "defectType=SLG",
  "process-window": "x=casting_speed_m_min&y=embr_current_a",
  "control-chart": "defectType=SLG",
  "before-after": "mode=periods&aFrom=2026-04-01&aTo=2026-06-30&bFrom=2026-07-01&bTo=2026-11-30",
  "slab-positions": "defectType=LFC",
  "cause-pareto": "minConfidence=probable",
  adjusted: "defectType=SLG&variables=casting_speed_m_min,mold_level_sd_mm&adjustFor=grade_family",
};
for (const [kind, qs] of Object.entries(REPORT_QUERIES)) {
  matrix[`GET /reports/${kind}`] = { allowed: READERS, sample: () => ({ path: `/api/reports/${kind}?${qs}` }) };
  matrix[`GET /reports/${kind}.xlsx`] = { allowed: READERS, sample: () => ({ path: `/api/reports/${kind}.xlsx?${qs}` }) };
}

const TAGGERS: Role[] = ["process", "admin"];
const userIdOf = (t: TestApp, role: string) => t.db.$client.prepare("select id from user where email = ?").pluck().get(`${role}@demo.test`) as string;
/** A fresh open investigation (SQL), so each role's call changes its own. */
function freshInvestigation(t: TestApp) {
  const now = Date.now();
  return Number(
    t.db.$client
      .prepare(
        "insert into investigations (ref, title, problem_statement, status, owner_id, opened_at, created_by) values (?, 'Matrix', 'Matrix investigation problem', 'open', ?, ?, ?)",
      )
      .run(`INV-MX-${++counter}`, userIdOf(t, "process"), now, userIdOf(t, "process")).lastInsertRowid,
  );
}
function freshTag(t: TestApp) {
  const code = `matrix-tag-${++counter}`;
  t.db.$client
    .prepare("insert into cause_tags (code, name, group_id) values (?, 'Matrix tag', (select id from cause_groups where code = 'process'))")
    .run(code);
  return code;
}
function freshLink(t: TestApp) {
  const d = defectOf(t, "inspector@demo.test");
  const link = Number(
    t.db.$client
      .prepare("insert into defect_causes (defect_id, tag_id, confidence) values (?, (select id from cause_tags where code = 'sen-clogging'), 'suspected')")
      .run(d).lastInsertRowid,
  );
  return `/api/defects/${d}/causes/${link}`;
}
let attachmentId: string | null = null;
function attachment(t: TestApp) {
  if (!attachmentId) {
    attachmentId = "00000000-0000-4000-8000-0000000000a1";
    const dir = path.join(t.env.UPLOAD_DIR, "attachments");
    fs.mkdirSync(dir, { recursive: true });
    fs.writeFileSync(path.join(dir, attachmentId), "matrix note\n");
    t.db.$client
      .prepare(
        "insert into attachments (id, owner_kind, owner_id, file_name, stored_file, mime, bytes, sha256) values (?, 'investigation', ?, 'note.txt', ?, 'text/plain', 12, 'x')",
      )
      .run(attachmentId, freshInvestigation(t), attachmentId);
  }
  return attachmentId;
}
Object.assign(matrix, {
  "GET /cause-tags": { allowed: READERS, sample: () => ({ path: "/api/cause-tags?includeRetired=true" }) },
  "POST /cause-tags": {
    allowed: TAGGERS,
    sample: () => ({ path: "/api/cause-tags", body: { code: `matrix-new-${++counter}`, name: "Matrix new tag", group: "equipment" } }),
  },
  "PATCH /cause-tags/:code": { allowed: TAGGERS, sample: (t) => ({ path: `/api/cause-tags/${freshTag(t)}`, body: { name: "Matrix renamed" } }) },
  "DELETE /cause-tags/:code": { allowed: TAGGERS, sample: (t) => ({ path: `/api/cause-tags/${freshTag(t)}` }) },
  "GET /defects/:id/causes": { allowed: READERS, sample: (t) => ({ path: `/api/defects/${defectOf(t, "inspector@demo.test")}/causes` }) },
  "POST /defects/:id/causes": {
    allowed: TAGGERS,
    sample: (t) => ({ path: `/api/defects/${defectOf(t, "inspector@demo.test")}/causes`, body: { tags: ["sen-clogging"], confidence: "suspected" } }),
  },
  "DELETE /defects/:id/causes/:linkId": { allowed: TAGGERS, sample: (t) => ({ path: freshLink(t), body: { reason: "matrix" } }) },
  "POST /causes/bulk": {
    allowed: TAGGERS,
    sample: (t) => ({
      path: "/api/causes/bulk",
      body: { selection: { kind: "heat", heatNo: firstHeat(t) }, tags: ["ladle-change"], confidence: "suspected", dryRun: true },
    }),
  },
  "GET /investigations": { allowed: READERS, sample: () => ({ path: "/api/investigations?status=active" }) },
  "GET /investigations/people": { allowed: READERS, sample: () => ({ path: "/api/investigations/people" }) },
  "POST /investigations": {
    allowed: TAGGERS,
    sample: (t) => ({
      path: "/api/investigations",
      body: { title: "Matrix opened", problemStatement: "Opened by the role matrix test.", heatNos: [firstHeat(t)] },
    }),
  },
  "GET /investigations/:id": { allowed: READERS, sample: (t) => ({ path: `/api/investigations/${freshInvestigation(t)}` }) },
  "PATCH /investigations/:id": { allowed: TAGGERS, sample: (t) => ({ path: `/api/investigations/${freshInvestigation(t)}`, body: { status: "in_progress" } }) },
  "POST /investigations/:id/subjects": {
    allowed: TAGGERS,
    sample: (t) => ({ path: `/api/investigations/${freshInvestigation(t)}/subjects`, body: { heatNos: [firstHeat(t)] } }),
  },
  "POST /investigations/:id/participants": {
    allowed: TAGGERS,
    sample: (t) => ({ path: `/api/investigations/${freshInvestigation(t)}/participants`, body: { userIds: [userIdOf(t, "quality")] } }),
  },
  "POST /investigations/:id/hypotheses": {
    allowed: TAGGERS,
    sample: (t) => ({ path: `/api/investigations/${freshInvestigation(t)}/hypotheses`, body: { statement: "Matrix hypothesis", causeTag: "sen-clogging" } }),
  },
  "PATCH /investigations/:id/hypotheses/:hid": {
    allowed: TAGGERS,
    sample: (t) => {
      const inv = freshInvestigation(t);
      const h = Number(
        t.db.$client.prepare("insert into investigation_hypotheses (investigation_id, statement) values (?, 'Matrix hypothesis')").run(inv).lastInsertRowid,
      );
      return { path: `/api/investigations/${inv}/hypotheses/${h}`, body: { status: "rejected" } };
    },
  },
  "POST /investigations/:id/actions": {
    allowed: TAGGERS,
    sample: (t) => ({
      path: `/api/investigations/${freshInvestigation(t)}/actions`,
      body: { description: "Matrix action", ownerId: userIdOf(t, "process"), dueOn: "2026-12-31" },
    }),
  },
  "PATCH /investigations/:id/actions/:aid": {
    allowed: TAGGERS,
    sample: (t) => {
      const inv = freshInvestigation(t);
      const a = Number(
        t.db.$client
          .prepare("insert into investigation_actions (investigation_id, description, owner_id, due_on) values (?, 'Matrix action', ?, '2026-12-31')")
          .run(inv, userIdOf(t, "process")).lastInsertRowid,
      );
      return { path: `/api/investigations/${inv}/actions/${a}`, body: { status: "done" } };
    },
  },
  "POST /investigations/:id/close": {
    allowed: TAGGERS,
    sample: (t) => ({
      path: `/api/investigations/${freshInvestigation(t)}/close`,
      body: { confirmedCause: "sen-clogging", closureNote: "Closed by the matrix test." },
    }),
  },
  "POST /investigations/:id/attachments": {
    allowed: TAGGERS,
    sample: (t) => ({ path: `/api/investigations/${freshInvestigation(t)}/attachments`, files: Buffer.from("plain text note\n") }),
  },
  "GET /attachments/:id": { allowed: READERS, sample: (t) => ({ path: `/api/attachments/${attachment(t)}` }) },
  "GET /admin/outbox": { allowed: ["admin"], sample: () => ({ path: "/api/admin/outbox?status=queued" }) },
  "POST /admin/outbox/:id/retry": {
    allowed: ["admin"],
    sample: (t) => {
      const id = Number(
        t.db.$client
          .prepare(
            "insert into email_outbox (kind, from_address, to_addresses, subject, text_body, status, attempts) values ('invitation', 'a@b.test', 'c@d.test', 'Matrix', 'Body', 'failed', 6)",
          )
          .run().lastInsertRowid,
      );
      return { path: `/api/admin/outbox/${id}/retry` };
    },
  },
} satisfies Record<string, Row>);

const CLAIMS: Role[] = ["claims", "admin"];
const CLAIM_READERS: Role[] = ["claims", "quality", "admin"];
/** A fresh claim linked to the first slab (SQL), so each role's call changes its own. */
function freshClaim(t: TestApp) {
  const id = Number(
    t.db.$client
      .prepare("insert into claims (claim_no, customer, received_on, defect_complained, status) values (?, 'Matrix customer', '2026-11-30', 'Slivers', 'new')")
      .run(`CL-MX-${++counter}`).lastInsertRowid,
  );
  t.db.$client.prepare("insert into claim_slabs (claim_id, slab_id, linked_via) values (?, (select id from slabs order by id limit 1), 'search')").run(id);
  return id;
}
const heatOfFirstSlab = (t: TestApp) =>
  t.db.$client.prepare("select h.heat_no from slabs s join heats h on h.id = s.heat_id order by s.id limit 1").pluck().get() as string;
Object.assign(matrix, {
  "GET /trace": { allowed: CLAIM_READERS, sample: (t) => ({ path: `/api/trace?q=${firstSlab(t)}` }) },
  "GET /heats/:heatNo/history": { allowed: CLAIM_READERS, sample: (t) => ({ path: `/api/heats/${firstHeat(t)}/history` }) },
  "GET /heats/:heatNo/history.xlsx": { allowed: CLAIM_READERS, sample: (t) => ({ path: `/api/heats/${firstHeat(t)}/history.xlsx` }) },
  "GET /claims": { allowed: CLAIM_READERS, sample: () => ({ path: "/api/claims?status=new" }) },
  "POST /claims": {
    allowed: CLAIMS,
    sample: () => ({
      path: "/api/claims",
      body: { claimNo: `CL-NEW-${++counter}`, customer: "Matrix customer", receivedOn: "2026-11-30", defectComplained: "Slivers" },
    }),
  },
  "GET /claims/:id": { allowed: CLAIM_READERS, sample: (t) => ({ path: `/api/claims/${freshClaim(t)}` }) },
  "PATCH /claims/:id": { allowed: CLAIMS, sample: (t) => ({ path: `/api/claims/${freshClaim(t)}`, body: { status: "under_review" } }) },
  "POST /claims/:id/slabs": { allowed: CLAIMS, sample: (t) => ({ path: `/api/claims/${freshClaim(t)}/slabs`, body: { slabIds: [slabRow(t)] } }) },
  "DELETE /claims/:id/slabs/:slabId": { allowed: CLAIMS, sample: (t) => ({ path: `/api/claims/${freshClaim(t)}/slabs/${firstSlab(t)}` }) },
  "POST /claims/:id/attachments": {
    allowed: CLAIMS,
    sample: (t) => ({ path: `/api/claims/${freshClaim(t)}/attachments`, files: Buffer.from("customer letter\n") }),
  },
  "POST /claims/:id/send-history": {
    allowed: CLAIMS,
    sample: (t) => ({ path: `/api/claims/${freshClaim(t)}/send-history`, body: { heatNo: heatOfFirstSlab(t), to: ["customer@example.test"] } }),
  },
} satisfies Record<string, Row>);

// The yard tablets (issue 13): the set and a slab for those who log yard defects; the window setting like the formula settings.
Object.assign(matrix, {
  "GET /yard/sync": { allowed: LOGGERS, sample: () => ({ path: "/api/yard/sync" }) },
  "GET /yard/slabs/:slabId": { allowed: LOGGERS, sample: (t) => ({ path: `/api/yard/slabs/${firstSlab(t)}` }) },
  "GET /yard/settings": { allowed: EVERY_ROLE, sample: () => ({ path: "/api/yard/settings" }) },
  "PUT /yard/settings": { allowed: SETUP, sample: () => ({ path: "/api/yard/settings", body: { syncWindowHours: 48 } }) },
  "POST /risk-models": {
    allowed: ["quality", "admin"],
    sample: () => ({
      path: "/api/risk-models",
      body: { targetKind: "type", targetCode: "SLG", conditions: ["mold_level_sd_mm", "superheat_c"], categories: ["grade_family"], knots: 3 },
    }),
  },
  "GET /risk-models": { allowed: ["quality", "process", "admin"], sample: () => ({ path: "/api/risk-models" }) },
  "GET /risk-models/:id": { allowed: ["quality", "process", "admin"], sample: (t) => ({ path: `/api/risk-models/${goodModel(t)}` }) },
  "GET /risk-models/:id/drift": { allowed: ["quality", "process", "admin"], sample: (t) => ({ path: `/api/risk-models/${goodModel(t)}/drift` }) },
  "POST /risk-models/:id/activate": { allowed: ["quality", "admin"], sample: (t) => ({ path: `/api/risk-models/${goodModel(t)}/activate` }) },
  "GET /risk/slabs": { allowed: EVERY_ROLE, sample: () => ({ path: "/api/risk/slabs?uninspected=true" }) },
  "GET /operating-windows": { allowed: ["quality", "process", "admin"], sample: () => ({ path: "/api/operating-windows" }) },
  "POST /operating-windows": {
    allowed: SETUP,
    sample: () => ({
      path: "/api/operating-windows",
      body: { name: `Matrix rule ${++counter}`, familyCode: "LC", conditions: [{ variable: "casting_speed_m_min", op: "above", value: 1.6 }] },
    }),
  },
  "PATCH /operating-windows/:id": {
    allowed: SETUP,
    sample: (t) => ({ path: `/api/operating-windows/${freshWindow(t)}`, body: { note: "Changed by the matrix." } }),
  },
  "DELETE /operating-windows/:id": { allowed: SETUP, sample: (t) => ({ path: `/api/operating-windows/${freshWindow(t)}` }) },
  "GET /operating-windows/flags": { allowed: EVERY_ROLE, sample: (t) => ({ path: `/api/operating-windows/flags?heatNo=${firstHeat(t)}` }) },
} satisfies Record<string, Row>);

/** A live operating window rule of its own for each call (SQL), so each role changes or retires its own. */
function freshWindow(t: TestApp) {
  return Number(
    t.db.$client
      .prepare("insert into operating_windows (name, conditions) values (?, ?)")
      .run(`Matrix window ${++counter}`, JSON.stringify([{ variable: "superheat_c", op: "above", value: 35 }])).lastInsertRowid,
  );
}

/** The newest trained version that beats its baseline (the POST /risk-models row trains one before it is asked for). */
function goodModel(t: TestApp) {
  return (
    (t.db.$client.prepare("select id from risk_models where status = 'ready' and beats_baseline = 1 order by id desc limit 1").pluck().get() as
      number | undefined) ?? 0
  );
}

function firstStrand(t: TestApp) {
  return t.db.$client.prepare("select id from strands order by id limit 1").pluck().get() as number;
}

function firstHeat(t: TestApp) {
  return t.db.$client.prepare("select heat_no from heats order by id limit 1").pluck().get() as string;
}
function firstSlab(t: TestApp) {
  return t.db.$client.prepare("select slab_id from slabs order by id limit 1").pluck().get() as string;
}

const key = (r: AnyRoute) => `${r.method.toUpperCase()} ${r.path}`;
const routes = () => t.app.locals.routes as AnyRoute[];

beforeAll(async () => {
  // Beside the demo plant, a history a risk model can learn from (slag spots driven by mold-level
  // fluctuation and superheat), ending a month ago so every slab has passed the yard.
  t = await createTestApp({
    scale: 0.01,
    beforeStart: (db) => void buildConfoundedPlant(db, { heats: 400, start: Date.now() - 30 * 86_400_000 - 400 * 90 * 60_000 }),
  });
  agents = {} as Record<Role, request.Agent>;
  for (const role of ROLES) agents[role] = await t.agentFor(role);
  tinyPng = await (
    await import("sharp")
  )
    .default({ create: { width: 8, height: 8, channels: 3, background: "#468" } })
    .png()
    .toBuffer();
  await realPhoto(t);
});
afterAll(() => t?.close());

let tinyPng: Buffer;
function send(
  agent: request.Agent | ReturnType<typeof request>,
  route: AnyRoute,
  s: { path: string; body?: unknown; file?: Buffer; files?: Buffer; photo?: boolean },
) {
  const call = (agent as request.Agent)[route.method](s.path).set("Origin", t.env.BETTER_AUTH_URL);
  if (s.file) return call.attach("file", s.file, "matrix.csv");
  if (s.files) return call.attach("files", s.files, "matrix-note.txt");
  if (s.photo) return call.attach("photos", tinyPng, "matrix.png");
  return s.body !== undefined ? call.send(s.body as object) : call;
}

describe("role matrix", () => {
  it("when the app is built, then every route has a row in this test, and every row a route", () => {
    const served = routes().map(key).sort();
    expect(served).toEqual(Object.keys(matrix).sort());
  });

  it("when signed out, then every non-public route answers 401 JSON", async () => {
    for (const route of routes()) {
      const row = matrix[key(route)]!;
      const res = await send(request(t.app), route, row.sample(t));
      if (row.allowed.includes("public")) {
        expect(res.status, key(route)).toBe(200);
      } else {
        expect(res.status, key(route)).toBe(401);
        expect(res.body.error.code, key(route)).toBe("unauthenticated");
      }
    }
  });

  it("when an admin calls every route that changes something, then each change leaves an audit row naming the admin", async () => {
    const adminId = t.db.$client.prepare("select id from user where email = 'admin@demo.test'").pluck().get() as string;
    const count = () => t.db.$client.prepare("select count(*) from audit_log where user_id = ?").pluck().get(adminId) as number;
    const unaudited: string[] = [];
    currentRole = "admin";
    for (const route of routes().filter((r) => r.method !== "get")) {
      const row = matrix[key(route)]!;
      if (!row.allowed.includes("admin")) continue;
      const sample = row.sample(t);
      // Dry runs and checks write nothing, so they leave nothing to audit.
      const dry = sample.path.includes("dryRun=true") || (sample.body as { dryRun?: boolean } | undefined)?.dryRun === true;
      if (dry) continue;
      const before = count();
      const res = await send(agents.admin, route, sample);
      expect(res.status < 300, `${key(route)} → ${res.status}`).toBe(true);
      if (count() <= before) unaudited.push(key(route));
    }
    expect(unaudited).toEqual([]);
    const last = t.db.$client.prepare("select * from audit_log where user_id = ? order by id desc limit 1").get(adminId) as { at: number; action: string };
    expect(Date.now() - last.at).toBeLessThan(60_000);
  });

  it.each(ROLES)("when signed in as %s, then the allowed routes answer 2xx and the others 403", async (role) => {
    currentRole = role;
    for (const route of routes()) {
      const row = matrix[key(route)]!;
      const res = await send(agents[role], route, row.sample(t));
      const allowed = row.allowed.includes("public") || row.allowed.includes("signed-in") || row.allowed.includes(role);
      const what = `${role} ${key(route)} → ${res.status} ${JSON.stringify(res.body).slice(0, 200)}`;
      if (row.tokenOnly) {
        expect(res.status, what).toBe(401);
      } else if (allowed) {
        expect(res.status >= 200 && res.status < 300, what).toBe(true);
      } else {
        expect(res.status, what).toBe(403);
        expect(res.body.error.code, what).toBe("forbidden");
      }
    }
  });

  it.each(ROLES)(
    "when signed in as %s, then the causes field of a defect, the defect list and the slab shows causes only to roles that read causes",
    async (role) => {
      const sqlite = t.db.$client;
      const defectId = sqlite.prepare("select d.id from defects d where d.deleted_at is null order by d.id limit 1").pluck().get() as number;
      if (!sqlite.prepare("select 1 from defect_causes where defect_id = ? and removed_at is null").get(defectId)) {
        sqlite
          .prepare("insert into defect_causes (defect_id, tag_id, confidence) values (?, (select id from cause_tags where code = 'sen-clogging'), 'suspected')")
          .run(defectId);
      }
      const slab = sqlite.prepare("select s.slab_id from defects d join slabs s on s.id = d.slab_id where d.id = ?").pluck().get(defectId) as string;
      const one = await agents[role].get(`/api/defects/${defectId}`);
      const list = await agents[role].get(`/api/defects?slab=${slab}&pageSize=200`);
      const page = await agents[role].get(`/api/slabs/${slab}`);
      const seen = [
        one.body.causes,
        list.body.items.find((d: { id: number }) => d.id === defectId).causes,
        page.body.defects.find((d: { id: number }) => d.id === defectId).causes,
      ];
      const readsCauses = READERS.includes(role); // the same roles as GET /defects/:id/causes, written out above
      for (const causes of seen)
        expect(
          causes.some((c: { tag: string }) => c.tag === "sen-clogging"),
          role,
        ).toBe(readsCauses);
      expect((await agents[role].get(`/api/defects/${defectId}/causes`)).status).toBe(readsCauses ? 200 : 403);
    },
  );
});
