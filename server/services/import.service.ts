import crypto from "node:crypto";
import { loadExcelJS } from "../lib/lazy-packages";
import { IMPORT_COLUMNS, IMPORT_MAX_LISTED_ERRORS, type ImportKind, type ImportResult, type ImportRun } from "@shared/api/imports";
import type { Db } from "../db/client";
import { coerceTable, ErrorList } from "../import/coerce";
import { planHeats, planSamples, planProducts, planSlabs, type Plan } from "../import/plan";
import type { Table } from "../import/read-table";
import { HttpError } from "../lib/http-error";
import { recordAudit } from "./audit.service";
import { createResolver } from "./conditions.service";
import { getPlantSettings } from "./settings.service";

export interface ImportActor {
  userId?: string | null;
  tokenId?: number | null;
  /** Shown in the audit log when there is no person (the token's name). */
  actor?: string | null;
}

export interface ImportRequest {
  kind: ImportKind;
  /** Its cells are released once checked (runImport keeps only the checked values): read it before, not after. */
  table: Table;
  dryRun: boolean;
  fileName: string | null;
  sha256: string | null;
  source: "upload" | "ingest";
  by: ImportActor;
  /** Called when the checks are over and the transaction starts writing (the worker tells the pool). */
  onWrite?: () => void;
}

/**
 * Validates, plans and (unless dry) writes one import in a single transaction, together with the
 * recomputed conditions of every slab it touches, its import-run row and its audit row. With any
 * row error nothing is written and the answer says what is wrong, row by row.
 */
export function runImport(db: Db, req: ImportRequest, timings?: Record<string, number>): ImportResult {
  const started = Date.now();
  const sqlite = db.$client;
  const errors = new ErrorList();
  let mark = performance.now();
  const lap = (name: string) => {
    if (!timings) return;
    const now = performance.now();
    timings[name] = (timings[name] ?? 0) + (now - mark) / 1000;
    mark = now;
  };
  const { rows, headerOk } = coerceTable(req.table, req.kind, errors);
  // The raw cells are not needed again: the checked values and the plan would otherwise sit beside them.
  req.table.body.release();
  lap("check cells");

  const work = () => {
    let plan: Plan | null = null;
    if (headerOk) {
      const settings = getPlantSettings(db);
      plan =
        req.kind === "heats"
          ? planHeats(sqlite, rows, errors, settings)
          : req.kind === "slabs"
            ? planSlabs(sqlite, rows, errors, settings)
            : req.kind === "products"
              ? planProducts(sqlite, rows, errors)
              : planSamples(sqlite, rows, errors);
    }
    lap("plan");
    const result: ImportResult = {
      kind: req.kind,
      dryRun: req.dryRun,
      format: req.table.format,
      fileName: req.fileName,
      rows: rows.length,
      valid: errors.count === 0,
      counts: plan?.counts ?? { created: 0, updated: 0, unchanged: 0 },
      errors: errors.list.slice(0, IMPORT_MAX_LISTED_ERRORS),
      errorCount: errors.count,
      slabsResolved: 0,
      importId: null,
    };
    if (req.dryRun || errors.count > 0 || !plan) return result;

    req.onWrite?.();
    // Slabs written from a slab file are resolved as they are written, a few thousand at a time
    // (their rows are in hand); the other kinds name the slabs they touched, resolved after.
    let resolver: ReturnType<typeof createResolver> | null = null;
    const changes = plan.apply((rows) => (resolver ??= createResolver(db)).resolveRows(rows));
    lap("write and resolve slabs");
    result.slabsResolved = (changes.resolved ?? 0) + (changes.slabIds.length ? (resolver ??= createResolver(db)).resolve(changes.slabIds) : 0);
    lap("resolve conditions");
    const finished = Date.now();
    const run = sqlite
      .prepare(
        `insert into import_runs (kind, source, file_name, format, sha256, rows, created, updated, unchanged, slabs_resolved, user_id, token_id, started_at, finished_at)
         values (@kind, @source, @fileName, @format, @sha256, @rows, @created, @updated, @unchanged, @slabsResolved, @userId, @tokenId, @started, @finished)`,
      )
      .run({
        kind: req.kind,
        source: req.source,
        fileName: req.fileName,
        format: req.table.format,
        sha256: req.sha256,
        rows: rows.length,
        ...result.counts,
        slabsResolved: result.slabsResolved,
        userId: req.by.userId ?? null,
        tokenId: req.by.tokenId ?? null,
        started,
        finished,
      });
    result.importId = Number(run.lastInsertRowid);
    recordAudit(db, {
      userId: req.by.userId,
      actor: req.by.actor,
      action: `import.${req.kind}`,
      entity: "import_run",
      entityId: result.importId,
      after: { source: req.source, fileName: req.fileName, sha256: req.sha256, rows: rows.length, ...result.counts, slabsResolved: result.slabsResolved },
    });
    lap("record");
    return result;
  };

  // A real import takes the write lock first (BEGIN IMMEDIATE): the plan reads what apply() then
  // writes, so no other writer may slip in between. A dry run only reads.
  const result = req.dryRun ? sqlite.transaction(work)() : sqlite.transaction(work).immediate();
  if (!req.dryRun && !result.valid) {
    throw new HttpError(
      422,
      "import_rejected",
      `${result.errorCount} problem${result.errorCount === 1 ? "" : "s"} found; nothing was imported. Correct the file and import it again.`,
      result,
    );
  }
  return result;
}

export const sha256 = (buf: Buffer) => crypto.createHash("sha256").update(buf).digest("hex");

export function listImportRuns(db: Db, limit = 20): ImportRun[] {
  const rows = db.$client
    .prepare(
      `select r.id, r.kind, r.source, r.file_name as fileName, r.format, r.rows, r.created, r.updated, r.unchanged,
         r.slabs_resolved as slabsResolved, coalesce(u.name, t.name) as "by", r.started_at as startedAt, r.finished_at as finishedAt
       from import_runs r left join user u on u.id = r.user_id left join api_tokens t on t.id = r.token_id
       order by r.id desc limit ?`,
    )
    .all(limit) as (Omit<ImportRun, "startedAt" | "finishedAt"> & { startedAt: number; finishedAt: number })[];
  return rows.map((r) => ({ ...r, startedAt: new Date(r.startedAt).toISOString(), finishedAt: new Date(r.finishedAt).toISOString() }));
}

const EXAMPLES: Record<ImportKind, Record<string, string | number | boolean | Date>> = {
  heats: {
    heat_no: "X260001",
    sequence_no: "S26-9001",
    caster: "CC2",
    grade: "LV-ST32",
    cast_start: new Date(Date.UTC(2026, 10, 3, 14, 20)),
    cast_end: new Date(Date.UTC(2026, 10, 3, 14, 52)),
    ladle_weight_t: 215,
    casting_speed_m_min: 1.45,
    tundish_temp_c: 1545,
    embr_current_a: 350,
    sen_depth_mm: 160,
    argon_nl_min: 8,
    mold_level_sd_mm: 2.4,
    c_pct: 0.12,
    si_pct: 0.2,
    mn_pct: 0.9,
    p_pct: 0.015,
    s_pct: 0.008,
    al_pct: 0.03,
    n_ppm: 55,
  },
  slabs: {
    slab_id: "X260001-101",
    heat_no: "X260001",
    strand: 1,
    piece_no: 1,
    length_mm: 10200,
    width_mm: 1500,
    thickness_mm: 230,
    cast_length_start_m: 0,
    transition: false,
  },
  "process-samples": {
    caster: "CC2",
    strand: 1,
    time: new Date(Date.UTC(2026, 10, 3, 14, 20, 20)),
    cast_length_m: 0.5,
    casting_speed_m_min: 1.44,
    tundish_temp_c: 1546,
    embr_current_a: 351,
    sen_depth_mm: 160,
    argon_nl_min: 8.1,
    mold_level_mm: -1.2,
  },
  products: { product_id: "HC26-004512", kind: "coil", slab_id: "X260001-101", rolled_at: new Date(Date.UTC(2026, 10, 6, 9, 5)), weight_t: 24.1 },
};

/** A template workbook: the header with one example row, and a second sheet describing each column. */
export async function buildTemplate(kind: ImportKind): Promise<Buffer> {
  const wb = new (await loadExcelJS()).Workbook();
  wb.creator = "Strandsight";
  const columns = IMPORT_COLUMNS[kind];
  const data = wb.addWorksheet("Data", { views: [{ state: "frozen", ySplit: 1 }] });
  data.columns = columns.map((c) => ({ header: c.key, key: c.key, width: Math.max(12, c.key.length + 4) }));
  data.getRow(1).font = { bold: true };
  const example = EXAMPLES[kind];
  data.addRow(Object.fromEntries(columns.map((c) => [c.key, example[c.key] ?? null])));
  columns.forEach((c, i) => {
    if (c.type === "datetime") data.getColumn(i + 1).numFmt = "yyyy-mm-dd hh:mm:ss";
  });
  const about = wb.addWorksheet("Columns", { views: [{ state: "frozen", ySplit: 1 }] });
  about.columns = [
    { header: "key", key: "key", width: 24 },
    { header: "required", key: "required", width: 10 },
    { header: "type", key: "type", width: 10 },
    { header: "unit", key: "unit", width: 10 },
    { header: "allowed range", key: "range", width: 18 },
    { header: "description", key: "description", width: 90 },
  ];
  about.getRow(1).font = { bold: true };
  for (const c of columns) {
    about.addRow({
      key: c.key,
      required: c.required ? "yes" : "",
      type: c.type,
      unit: c.unit ?? "",
      range: c.min !== undefined || c.max !== undefined ? `${c.min ?? ""} … ${c.max ?? ""}` : "",
      description: c.description,
    });
  }
  about.addRow({});
  about.addRow({
    key: "Notes",
    description:
      "Keys match case-insensitively. Remove the example row. Re-importing the same ids updates them; a column left out keeps the stored values, an empty cell clears them. Invented example values.",
  });
  return Buffer.from(await wb.xlsx.writeBuffer());
}
