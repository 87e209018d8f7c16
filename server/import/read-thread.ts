/**
 * The reader thread of a large workbook import (sheet-reader.ts starts it): reads the first sheet
 * under the limits with the same bounded reader as ever (xlsx-sheet.ts) and sends the rows on to the
 * import thread a page of cells at a time, so the import thread checks and writes one page while this
 * thread reads the next. It holds no database and writes nothing; it ends when the sheet is read,
 * refused, or when the import thread stops it. Its heap is capped like the import thread's.
 */
import { parentPort, workerData, type MessagePort } from "node:worker_threads";
import { HttpError, type Said } from "../lib/http-error";
import { CellStore, type CellStoreData } from "./cell-store";
import { streamXlsxFile, type Limits } from "./xlsx-sheet";

/** Marks the reader thread's workerData, so the import threads' entry knows which thread it starts. */
export const READER_ROLE = "strandsight-sheet-reader";

export interface ReadJob {
  role: typeof READER_ROLE;
  file: string;
  limits: Limits;
  /** Rows are sent once this many cells are held (a CellStore page: 65,536). */
  pageCells: number;
}

export type FromReader =
  | { type: "header"; headers: string[]; date1904: boolean }
  | { type: "rows"; rows: CellStoreData }
  | { type: "end" }
  /** Refused by the limits or as damaged: the same words the import answers with. */
  | { type: "refused"; status: number; code: string; message: string; said?: Said[]; details?: unknown }
  /** Something the reader did not foresee: still the file's fault (415), said by the import thread. */
  | { type: "failed" };

export const isReadJob = (data: unknown): data is ReadJob => (data as { role?: unknown } | null)?.role === READER_ROLE;

/** Reads the job's sheet and sends its header, its rows page by page, then the end (or the refusal). */
export async function readForImport(job: ReadJob, port: Pick<MessagePort, "postMessage">): Promise<void> {
  const send = (message: FromReader, transfer?: ArrayBuffer[]) => port.postMessage(message, transfer);
  const store = new CellStore();
  const flush = () => {
    if (store.length === 0) return;
    const { data, transfer } = store.detach();
    send({ type: "rows", rows: data }, transfer);
  };
  try {
    await streamXlsxFile(job.file, job.limits, {
      header: (headers, date1904) => send({ type: "header", headers, date1904 }),
      row: (rowNo, cells) => {
        store.push(rowNo, cells);
        if (store.cellCount >= job.pageCells) flush();
      },
    });
    flush();
    send({ type: "end" });
  } catch (err) {
    if (err instanceof HttpError) send({ type: "refused", status: err.status, code: err.code, message: err.message, said: err.said, details: err.details });
    else send({ type: "failed" });
  }
}

/** The thread's own start: its job is its workerData. */
export function runReaderThread(): Promise<void> {
  if (!parentPort || !isReadJob(workerData)) throw new Error("read-thread.ts runs as the reader thread of an import, with its job as workerData.");
  return readForImport(workerData, parentPort);
}
