import crypto from "node:crypto";
import { loadExcelJS } from "../lib/lazy-packages";
import { IMPORT_COLUMNS, IMPORT_MAX_LISTED_ERRORS, type ImportKind, type ImportResult, type ImportRun } from "@shared/api/imports";
import type { Db } from "../db/client";
import type { CellStore } from "../import/cell-store";
import { coerceTable, ErrorList, TableChecker, type ParsedRows } from "../import/coerce";
import {
  heatsPlanner,
  planBatches,
  planHeats,
  planSamples,
  planProducts,
  planSlabs,
  slabsPlanner,
  type AppliedChanges,
  type BatchPlanner,
  type Plan,
  type PlanCounts,
  type ResolveSink,
} from "../import/plan";
import type { Table } from "../import/read-table";
import type { SheetEvent } from "../import/sheet-reader";
import { HttpError, said } from "../lib/http-error";
import { recordAudit } from "./audit.service";
import { createResolver, type Resolver } from "./conditions.service";
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

/** What an import says about itself in its answer and its run row. */
interface ImportMeta {
  kind: ImportKind;
  dryRun: boolean;
  format: Table["format"];
  fileName: string | null;
  sha256: string | null;
  source: "upload" | "ingest";
  by: ImportActor;
  onWrite?: () => void;
  /** When the import started (epoch ms). */
  started: number;
}

/** Seconds per phase, summed, into `timings` when given. */
function lapper(timings: Record<string, number> | undefined) {
  let mark = performance.now();
  return (name: string) => {
    if (!timings) return;
    const now = performance.now();
    timings[name] = (timings[name] ?? 0) + (now - mark) / 1000;
    mark = now;
  };
}

function newResult(meta: ImportMeta, rows: number, errors: ErrorList, counts: PlanCounts | undefined): ImportResult {
  return {
    kind: meta.kind,
    dryRun: meta.dryRun,
    format: meta.format,
    fileName: meta.fileName,
    rows,
    valid: errors.count === 0,
    counts: counts ? { ...counts } : { created: 0, updated: 0, unchanged: 0 },
    errors: errors.list.slice(0, IMPORT_MAX_LISTED_ERRORS),
    errorCount: errors.count,
    slabsResolved: 0,
    importId: null,
  };
}

/** Once the plan is written: the other slabs it touched resolved, the run and its audit row recorded. */
function closeWrite(db: Db, meta: ImportMeta, result: ImportResult, changes: AppliedChanges, resolver: () => Resolver, lap: (name: string) => void) {
  result.slabsResolved = (changes.resolved ?? 0) + (changes.slabIds.length ? resolver().resolve(changes.slabIds) : 0);
  // Slabs resolved as they were written whose cast time a later page moved: once more, counted once.
  if (changes.again?.length) resolver().resolve(changes.again);
  lap("resolve conditions");
  const finished = Date.now();
  const run = db.$client
    .prepare(
      `insert into import_runs (kind, source, file_name, format, sha256, rows, created, updated, unchanged, slabs_resolved, user_id, token_id, started_at, finished_at)
         values (@kind, @source, @fileName, @format, @sha256, @rows, @created, @updated, @unchanged, @slabsResolved, @userId, @tokenId, @started, @finished)`,
    )
    .run({
      kind: meta.kind,
      source: meta.source,
      fileName: meta.fileName,
      format: meta.format,
      sha256: meta.sha256,
      rows: result.rows,
      ...result.counts,
      slabsResolved: result.slabsResolved,
      userId: meta.by.userId ?? null,
      tokenId: meta.by.tokenId ?? null,
      started: meta.started,
      finished,
    });
  result.importId = Number(run.lastInsertRowid);
  recordAudit(db, {
    userId: meta.by.userId,
    actor: meta.by.actor,
    action: `import.${meta.kind}`,
    entity: "import_run",
    entityId: result.importId,
    after: {
      source: meta.source,
      fileName: meta.fileName,
      sha256: meta.sha256,
      rows: result.rows,
      ...result.counts,
      slabsResolved: result.slabsResolved,
    },
  });
  lap("record");
}

/** The part of an import inside its transaction: the plan, then (unless dry or with problems) its writes. */
function planAndWrite(db: Db, meta: ImportMeta, rows: number, makePlan: () => Plan | null, errors: ErrorList, lap: (name: string) => void): ImportResult {
  const plan = makePlan();
  lap("plan");
  const result = newResult(meta, rows, errors, plan?.counts);
  if (meta.dryRun || errors.count > 0 || !plan) return result;

  meta.onWrite?.();
  // Slabs written from a slab file are resolved as they are written, a few thousand at a time
  // (their rows are in hand); the other kinds name the slabs they touched, resolved after.
  let resolver: Resolver | null = null;
  const resolverOf = () => (resolver ??= createResolver(db));
  const changes = plan.apply((rows) => resolverOf().resolveRows(rows));
  lap("write and resolve slabs");
  closeWrite(db, meta, result, changes, resolverOf, lap);
  return result;
}

/**
 * A real import takes the write lock first (BEGIN IMMEDIATE): the plan reads what apply() then
 * writes, so no other writer may slip in between. A dry run only reads.
 */
function inTransaction(db: Db, dryRun: boolean, work: () => ImportResult): ImportResult {
  const sqlite = db.$client;
  return dryRun ? sqlite.transaction(work)() : sqlite.transaction(work).immediate();
}

function refuseIfInvalid(result: ImportResult): ImportResult {
  if (!result.dryRun && !result.valid) {
    throw new HttpError(422, "import_rejected", said("imports.rejected", { count: result.errorCount }), result);
  }
  return result;
}

/**
 * Validates, plans and (unless dry) writes one import in a single transaction, together with the
 * recomputed conditions of every slab it touches, its import-run row and its audit row. With any
 * row error nothing is written and the answer says what is wrong, row by row.
 */
export function runImport(db: Db, req: ImportRequest, timings?: Record<string, number>): ImportResult {
  const meta: ImportMeta = { ...req, format: req.table.format, started: Date.now() };
  const sqlite = db.$client;
  const errors = new ErrorList();
  const lap = lapper(timings);
  const { rows, headerOk } = coerceTable(req.table, req.kind, errors);
  // The raw cells are not needed again: the checked values and the plan would otherwise sit beside them.
  req.table.body.release();
  lap("check cells");

  const plan = () => {
    if (!headerOk) return null;
    const settings = getPlantSettings(db);
    return req.kind === "heats"
      ? planHeats(sqlite, rows, errors, settings)
      : req.kind === "slabs"
        ? planSlabs(sqlite, rows, errors, settings)
        : req.kind === "products"
          ? planProducts(sqlite, rows, errors)
          : planSamples(sqlite, rows, errors);
  };
  return refuseIfInvalid(inTransaction(db, req.dryRun, () => planAndWrite(db, meta, rows.length, plan, errors, lap)));
}

export interface StreamedImportRequest extends Omit<ImportRequest, "kind" | "table" | "sha256"> {
  kind: "heats" | "slabs";
  /** The sheet's header, then its rows a page at a time, as the reader thread sends them (sheet-reader.ts). */
  sheet: AsyncIterable<SheetEvent>;
  /** The file's SHA-256, asked for when the reading starts and awaited at the end. */
  sha256: () => Promise<string | null>;
  /** How long the write lock may be held waiting for pages, in all, beyond the time spent working under it, before the import stops writing ahead (ms); 0: never write ahead. */
  writeAheadIdleMs?: number;
}

/**
 * How long, in all, an import writing ahead may hold the write lock while waiting for the reader
 * (ms), unless it has worked longer than that under the lock (then as long as it has worked).
 * Writing ahead holds the lock from the first page to the commit. While the import thread checks
 * and writes pages it holds it about as long as a whole-table import's plan and write would (a slab
 * file, where writing is the slower side, waits for the reader hardly at all); a reader slower than
 * the writer keeps it waiting besides (a heat file: some tenths of a second), and a much slower one
 * (a sheet far wider than its columns, a loaded machine) would keep the yard's writers waiting for
 * nothing. Past the allowance the written pages are rolled back, the lock released, and the import
 * goes on as a whole-table import does: it reads to the end, then plans and writes at once. So the
 * lock is held at most twice as long as the work under it, or half a second longer.
 */
export const WRITE_AHEAD_IDLE_MS = 500;

/**
 * One heats or slabs import from a workbook read in its own thread: each page of rows is checked
 * as it arrives, and (unless a dry run) planned and written at once, so the import thread writes
 * while the reader thread reads. The same checks, answers and data as runImport, with nothing
 * half-written:
 *  - the pages are written inside one transaction taken with the write lock (BEGIN IMMEDIATE) at the
 *    first page, in file order, each checked against what the database held before the import
 *    (plan.ts, BatchPlanner) and written only while no problem at all has been found;
 *  - the first problem (a row's, a plan's, the header's), a refusal by the reader (limits, damage),
 *    or any failure rolls back what was written and releases the lock, so a refused file leaves the
 *    database untouched;
 *  - after a problem or a stop for waiting too long (WRITE_AHEAD_IDLE_MS) the import finishes as
 *    runImport does: every page kept, checked whole, planned and written in one transaction, so the
 *    errors listed and their order are the same as for the whole table.
 */
export async function runImportStreamed(db: Db, req: StreamedImportRequest, timings?: Record<string, number>): Promise<ImportResult> {
  const started = Date.now();
  const sqlite = db.$client;
  const sha = req.sha256();
  // Awaited at the end; a failure before then must not go unhandled meanwhile.
  sha.catch(() => undefined);
  const time = (name: string, ms: number) => {
    if (timings) timings[name] = (timings[name] ?? 0) + ms / 1000;
  };
  let checker: TableChecker | null = null;
  const rowErrors = new ErrorList();
  const pages: ParsedRows[] = [];
  let rowCount = 0;

  const idleBudget = req.dryRun ? 0 : (req.writeAheadIdleMs ?? WRITE_AHEAD_IDLE_MS);
  let mayWriteAhead = idleBudget > 0;
  // Written ahead so far (the lock held), or null. (Typed so: it is set and cleared inside closures.)
  let ahead = null as {
    planner: BatchPlanner;
    planErrors: ErrorList;
    sink: ResolveSink;
    resolver: () => Resolver;
    lockedAt: number;
    /** Time under the lock waiting for pages, and working on them (ms). */
    idle: number;
    busy: number;
  } | null;
  const stopWritingAhead = () => {
    mayWriteAhead = false;
    if (!ahead) return;
    sqlite.exec("ROLLBACK");
    time("write lock held", performance.now() - ahead.lockedAt);
    ahead = null;
  };
  const problems = () => (checker?.headerErrorCount ?? 0) + rowErrors.count + (ahead?.planErrors.count ?? 0);
  const plannerOf = (errors: ErrorList): BatchPlanner =>
    req.kind === "heats" ? heatsPlanner(sqlite, errors, getPlantSettings(db)) : slabsPlanner(sqlite, errors, getPlantSettings(db));

  const onPage = (cells: CellStore) => {
    const rows = checker!.check(cells, rowErrors);
    cells.release();
    pages.push(rows);
    rowCount += rows.length;
    if (!mayWriteAhead || !checker!.headerOk) return;
    if (problems() > 0) return stopWritingAhead();
    if (!ahead) {
      sqlite.exec("BEGIN IMMEDIATE");
      const lockedAt = performance.now();
      const planErrors = new ErrorList();
      let resolver: Resolver | null = null;
      const resolverOf = () => (resolver ??= createResolver(db));
      ahead = {
        planner: plannerOf(planErrors),
        planErrors,
        sink: (slabRows) => resolverOf().resolveRows(slabRows),
        resolver: resolverOf,
        lockedAt,
        idle: 0,
        busy: 0,
      };
    }
    const batch = ahead.planner.check(rows);
    if (problems() > 0) return stopWritingAhead();
    ahead.planner.write(batch, ahead.sink);
  };

  const pagesIn = req.sheet[Symbol.asyncIterator]();
  try {
    for (;;) {
      const waitFrom = performance.now();
      const next = pagesIn.next();
      let got: IteratorResult<SheetEvent>;
      if (ahead) {
        // Waiting for the reader while holding the lock: at most the rest of the allowance.
        const allowed = Math.max(idleBudget, ahead.busy) - ahead.idle;
        let timer: ReturnType<typeof setTimeout> | undefined;
        const out = new Promise<null>((resolve) => (timer = setTimeout(resolve, Math.max(0, allowed), null)));
        try {
          const first = await Promise.race([next, out]);
          if (first === null) {
            stopWritingAhead();
            got = await next;
          } else got = first;
        } finally {
          clearTimeout(timer);
        }
      } else got = await next;
      const waited = performance.now() - waitFrom;
      time("import thread waiting", waited);
      if (ahead) ahead.idle += waited;
      if (got.done) break;
      const busyFrom = performance.now();
      if (got.value.type === "header") checker = new TableChecker(req.kind, got.value.headers, "xlsx", false, got.value.date1904);
      else onPage(got.value.rows);
      const busy = performance.now() - busyFrom;
      time("import thread busy", busy);
      if (ahead) ahead.busy += busy;
    }
    // The reader sends the header first and refuses a sheet without one.
    if (!checker) throw new HttpError(400, "empty_file", said("imports.noHeaderSheet"));
    const errors = new ErrorList();
    checker.headerErrorsInto(errors);
    errors.append(rowErrors);
    const meta: ImportMeta = { ...req, format: "xlsx", sha256: await sha, started };
    const lap = lapper(timings);

    if (ahead) {
      // Every page was checked and written under the lock, and no problem found: close the import.
      if (timings) timings["wrote ahead"] = 1;
      req.onWrite?.();
      const { planner, sink, resolver, lockedAt } = ahead;
      const result = newResult(meta, rowCount, errors, planner.counts);
      closeWrite(db, meta, result, planner.finish(sink), resolver, lap);
      sqlite.exec("COMMIT");
      ahead = null;
      time("write lock held", performance.now() - lockedAt);
      return result;
    }
    // As runImport does with a whole table, over the pages kept.
    const headerOk = checker.headerOk;
    const lockFrom = performance.now();
    const result = inTransaction(db, req.dryRun, () =>
      planAndWrite(db, meta, rowCount, () => (headerOk ? planBatches(plannerOf(errors), pages) : null), errors, lap),
    );
    if (!req.dryRun) time("write lock held", performance.now() - lockFrom);
    return refuseIfInvalid(result);
  } catch (err) {
    // A refusal while reading, or a failure while writing ahead: nothing stays written.
    if (ahead) stopWritingAhead();
    throw err;
  }
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
