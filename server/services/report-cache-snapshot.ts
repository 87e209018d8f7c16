/**
 * The report cache on disk: its columns written at shutdown (and now and then while running) so a
 * start reads them back in a second or two instead of rebuilding them from every slab row (about
 * six seconds per million slabs).
 *
 * A snapshot is used only when it is whole and current:
 * - whole: a fixed mark, the layout this code writes, the same variables, the expected length and a
 *   CRC-32 over every byte (a torn or damaged file is ignored);
 * - current: it was taken from this database (an id kept in the database) at the change count the
 *   database still has. SQLite triggers count every insert, update and delete of slab_conditions,
 *   whichever connection or program makes it, in the same transaction as the change: a crash after
 *   the last snapshot, an import thread's write, a restored backup or an edit by hand all show.
 *   The highest slab id and the grade families are compared too (cheap, and they name the change).
 * It is written to a temporary file, flushed to disk, then renamed over the old one, so a crash
 * while writing leaves the previous snapshot (or none), never half of one.
 *
 * Written here because the format is only our typed columns: no library writes or checks these.
 */
import fs from "node:fs";
import path from "node:path";
import zlib from "node:zlib";
import type Database from "better-sqlite3";
import { closeDisk, FACT_VARIABLES, ID_COLUMNS, rebuildIndex, sharedColumn, type SlabFacts } from "./report-cache-columns";
import { chooseOnDisk, newColumnFile, readAt, writeAt, type DiskColumn, type DiskType } from "./report-cache-disk";

const MAGIC = Buffer.from("STRANDSIGHT-RC1\n", "latin1");
const FORMAT = 1;
/** A header larger than this is not one of ours. */
const MAX_HEADER = 1 << 20;
/** Bytes written or checked between two turns of the event loop. */
const PIECE = 8 << 20;

export interface Fingerprint {
  /** The database's id and change count of slab_conditions (report_cache_state, kept by triggers). */
  databaseId: string;
  version: number;
  slabs: number;
  maxSlabId: number;
  /** [grade id, family id] of every grade. */
  families: [number, number][];
}

interface Header {
  format: number;
  variables: string[];
  size: number;
  columns: { name: string; type: string }[];
  fingerprint: Fingerprint;
  writtenAt: number;
}

type Typed = Uint8Array | Uint16Array | Int32Array | Float32Array | Float64Array;
const TYPES: Record<string, new (n: number) => Typed> = { Uint8Array, Uint16Array, Int32Array, Float32Array, Float64Array };
const ID_TYPES = ["Uint8Array", "Uint16Array", "Int32Array"];
const VALUE_TYPES = ["Float32Array", "Float64Array"];

/** Which types each column may have in a snapshot. */
function allowedTypes(name: string): string[] {
  if (name === "slabId" || name === "heatId") return ["Int32Array"];
  if (name === "castAt") return ["Float64Array"];
  if (name === "transition") return ["Uint8Array"];
  if (name === "weightT" || name.startsWith("vars.")) return VALUE_TYPES;
  return ID_TYPES;
}

const COLUMN_NAMES = ["slabId", "castAt", "heatId", "transition", "weightT", ...ID_COLUMNS, ...FACT_VARIABLES.map((k) => `vars.${k}`)];

/** A column's type and its first `size` rows' bytes, piece by piece (from memory, or from its file). */
function sourceOf(f: SlabFacts, name: string, size: number) {
  const d = name.startsWith("vars.") ? f.disk[name.slice(5)] : undefined;
  if (d) {
    const bytes = size * (d.type === "Float32Array" ? 4 : 8);
    return {
      name,
      type: d.type as string,
      bytes,
      piece: (at: number, into: Uint8Array) => {
        // A report between two pieces may have replaced the file (a value off the grid) or the facts:
        // this snapshot would mix two states, and the descriptor may be another file's by now.
        if (d.closed || f.disk[name.slice(5)] !== d) throw new Error("the report cache changed while its snapshot was written");
        const out = into.subarray(0, Math.min(into.length, bytes - at));
        if (!readAt(d.fd, out, at)) throw new Error(`report cache: the file of ${name} is shorter than its rows`);
        return out;
      },
    };
  }
  const col = name.startsWith("vars.") ? f.vars[name.slice(5)]! : (f[name as "slabId"] as Typed);
  const view = new Uint8Array(col.buffer, col.byteOffset, size * col.BYTES_PER_ELEMENT);
  return { name, type: col.constructor.name, bytes: view.length, piece: (at: number) => view.subarray(at, Math.min(view.length, at + PIECE)) };
}

function setColumn(f: SlabFacts, name: string, col: Typed) {
  if (name.startsWith("vars.")) f.vars[name.slice(5)] = col as Float32Array | Float64Array;
  else (f as unknown as Record<string, Typed>)[name] = col;
}

const pad8 = (n: number) => (8 - (n % 8)) % 8;

export function gradeFamilies(sqlite: Database.Database): [number, number][] {
  return sqlite.prepare("select id, coalesce(family_id, 0) from grades order by id").raw().all() as [number, number][];
}

// The change counter the snapshot is checked against is a one-row table (report_cache_state) and
// three triggers on slab_conditions, made by a migration (drizzle/0008_report_cache_counter.sql). A
// count kept by SQLite itself rather than by this process: it also counts what other connections and
// programs write, in the same transaction as the write, so no crash can leave it behind the data.
// Costs one small update per row written to slab_conditions. SQLite keeps no persistent change count
// of its own (PRAGMA data_version lives only as long as a connection).

/** The database's side of the fingerprint (no pass over the rows: the counter, the highest id, the grades). */
export function databaseFingerprint(sqlite: Database.Database, slabs: number): Fingerprint {
  const state = sqlite.prepare("select database_id as id, version from report_cache_state where id = 1").get() as { id: string; version: number } | undefined;
  const maxSlabId = (sqlite.prepare("select coalesce(max(slab_id), 0) from slab_conditions").pluck().get() as number) ?? 0;
  return { databaseId: state?.id ?? "", version: state?.version ?? -1, slabs, maxSlabId, families: gradeFamilies(sqlite) };
}

/** The facts' fingerprint: the database's counter now (the caller makes sure the facts hold every change). */
export function factsFingerprint(sqlite: Database.Database, f: SlabFacts): Fingerprint {
  let maxSlabId = 0;
  for (let i = 0; i < f.size; i++) if (f.slabId[i]! > maxSlabId) maxSlabId = f.slabId[i]!;
  return { ...databaseFingerprint(sqlite, f.size), maxSlabId };
}

/** Why a database and a snapshot differ, in words for the log; null when they agree. */
export function fingerprintDifference(snapshot: Fingerprint, db: Fingerprint): string | null {
  if (!snapshot.databaseId || snapshot.databaseId !== db.databaseId) return "it was taken from another database";
  if (snapshot.maxSlabId !== db.maxSlabId) return `the highest slab id is ${db.maxSlabId}, the snapshot's ${snapshot.maxSlabId}`;
  if (JSON.stringify(snapshot.families) !== JSON.stringify(db.families)) return "grade families changed after the snapshot";
  if (snapshot.version !== db.version) return "slab conditions were written after the snapshot";
  return null;
}

/** The snapshot's file: beside the database. */
export const snapshotFileFor = (databaseFile: string) => `${databaseFile}.report-cache`;

/**
 * Writes the facts' rows to `file` (temp file, fsync, rename). The caller makes sure the facts are
 * current (nothing pending) when it calls; the columns are read as they are while the bytes go out.
 * `version`: the change count the facts are known to hold, when the caller knows it better than the
 * counter read now (the report thread: the main thread reads it when it asks for the snapshot, and
 * every change it told before is in the facts; a change written since would otherwise be claimed).
 */
export async function writeSnapshot(sqlite: Database.Database, f: SlabFacts, file: string, version?: number): Promise<{ bytes: number }> {
  const size = f.size;
  const columns = COLUMN_NAMES.map((name) => sourceOf(f, name, size));
  const header: Header = {
    format: FORMAT,
    variables: FACT_VARIABLES,
    size,
    columns: columns.map((c) => ({ name: c.name, type: c.type })),
    fingerprint: { ...factsFingerprint(sqlite, f), ...(version === undefined ? {} : { version }) },
    writtenAt: Date.now(),
  };
  const json = Buffer.from(JSON.stringify(header), "utf8");
  const lead = Buffer.alloc(MAGIC.length + 4 + json.length + pad8(MAGIC.length + 4 + json.length));
  MAGIC.copy(lead, 0);
  lead.writeUInt32LE(json.length, MAGIC.length);
  json.copy(lead, MAGIC.length + 4);
  const tmp = path.join(path.dirname(file), `.${path.basename(file)}.${process.pid}.tmp`);
  const fh = await fs.promises.open(tmp, "w", 0o600);
  let crc = 0;
  let bytes = 0;
  const out = async (chunk: Uint8Array) => {
    crc = zlib.crc32(chunk, crc);
    let done = 0;
    while (done < chunk.length) done += (await fh.write(chunk, done)).bytesWritten;
    bytes += chunk.length;
  };
  try {
    await out(lead);
    const zeros = new Uint8Array(8);
    // For the columns in files: read a piece, write it out, before the next (nothing else is read meanwhile).
    let buffer: Uint8Array | null = null;
    for (const c of columns) {
      for (let at = 0; at < c.bytes; at += PIECE) await out(c.piece(at, (buffer ??= new Uint8Array(PIECE))));
      await out(zeros.subarray(0, pad8(c.bytes)));
    }
    const tail = Buffer.alloc(4);
    tail.writeUInt32LE(crc >>> 0, 0);
    await fh.write(tail);
    bytes += 4;
    await fh.sync();
  } catch (err) {
    await fh.close().catch(() => undefined);
    await fs.promises.rm(tmp, { force: true });
    throw err;
  }
  await fh.close();
  await fs.promises.rename(tmp, file);
  return { bytes };
}

/** Temporary files a crash left behind while writing a snapshot. */
export async function removeStaleTemps(file: string) {
  const dir = path.dirname(file);
  const prefix = `.${path.basename(file)}.`;
  const names = await fs.promises.readdir(dir).catch(() => [] as string[]);
  await Promise.all(names.filter((n) => n.startsWith(prefix) && n.endsWith(".tmp")).map((n) => fs.promises.rm(path.join(dir, n), { force: true })));
}

export type SnapshotResult = { facts: SlabFacts; bytes: number } | { facts: null; reason: string };

/** Reads exactly target.length bytes (a pipe or a file: always from the current position). */
async function readFully(fh: fs.promises.FileHandle, target: Uint8Array): Promise<boolean> {
  let done = 0;
  while (done < target.length) {
    const { bytesRead } = await fh.read(target, done, Math.min(target.length - done, PIECE), null);
    if (bytesRead === 0) return false;
    done += bytesRead;
  }
  return true;
}

/**
 * Reads a snapshot and checks it against the database. `progress(done, total)` is told the bytes
 * read; `capacityFor(rows)` gives the columns' room.
 */
export async function readSnapshot(
  sqlite: Database.Database,
  file: string,
  opts: {
    capacityFor: (rows: number) => number;
    progress?: (phase: "checking" | "reading", done: number, total: number) => void;
    stopped?: () => boolean;
    /** Where condition columns beyond the memory set aside go (report-cache-disk.ts); null: all in memory. */
    diskDir?: string | null;
  },
): Promise<SnapshotResult> {
  let fh: fs.promises.FileHandle;
  try {
    fh = await fs.promises.open(file, "r");
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === "ENOENT") return { facts: null, reason: "no snapshot" };
    return { facts: null, reason: `the snapshot cannot be opened (${(err as NodeJS.ErrnoException).code ?? String(err)})` };
  }
  try {
    const lead = Buffer.alloc(MAGIC.length + 4);
    if (!(await readFully(fh, lead)) || !lead.subarray(0, MAGIC.length).equals(MAGIC))
      return { facts: null, reason: "the file is not a report cache snapshot" };
    const headerLength = lead.readUInt32LE(MAGIC.length);
    if (headerLength > MAX_HEADER) return { facts: null, reason: "the snapshot's header is damaged" };
    const json = Buffer.alloc(headerLength + pad8(lead.length + headerLength));
    if (!(await readFully(fh, json))) return { facts: null, reason: "the snapshot is cut short" };
    let crc = zlib.crc32(json, zlib.crc32(lead));
    let header: Header;
    try {
      header = JSON.parse(json.subarray(0, headerLength).toString("utf8")) as Header;
    } catch {
      return { facts: null, reason: "the snapshot's header is damaged" };
    }
    if (header.format !== FORMAT) return { facts: null, reason: `the snapshot has layout ${header.format}, this version reads ${FORMAT}` };
    if (JSON.stringify(header.variables) !== JSON.stringify(FACT_VARIABLES))
      return { facts: null, reason: "the snapshot holds other variables than this version reports" };
    const names = header.columns?.map((c) => c.name) ?? [];
    if (JSON.stringify(names) !== JSON.stringify(COLUMN_NAMES) || header.columns.some((c) => !allowedTypes(c.name).includes(c.type))) {
      return { facts: null, reason: "the snapshot's columns are not the ones this version holds" };
    }
    const size = header.size;
    if (!Number.isSafeInteger(size) || size < 0 || size !== header.fingerprint?.slabs || typeof header.fingerprint.version !== "number")
      return { facts: null, reason: "the snapshot's header is damaged" };
    const columnBytes = header.columns.reduce((sum, c) => {
      const n = size * (TYPES[c.type] as unknown as { BYTES_PER_ELEMENT: number }).BYTES_PER_ELEMENT;
      return sum + n + pad8(n);
    }, 0);
    const total = lead.length + json.length + columnBytes + 4;
    const stat = await fh.stat();
    if (stat.isFile() && stat.size !== total)
      return { facts: null, reason: `the snapshot is ${stat.size < total ? "cut short" : "longer than its header says"}` };

    // Current? Checked before the columns are read: a stale snapshot costs neither the reading nor
    // the memory of a second set of columns beside the rebuilt one.
    opts.progress?.("checking", 0, size);
    const difference = fingerprintDifference(header.fingerprint, databaseFingerprint(sqlite, size));
    if (difference) return { facts: null, reason: `the snapshot is out of date: ${difference}` };

    const capacity = opts.capacityFor(size);
    const facts = { size, vars: {}, disk: {} } as unknown as SlabFacts;
    // Condition columns beyond the memory set aside go straight from the snapshot to their files.
    const types = Object.fromEntries(header.columns.filter((c) => c.name.startsWith("vars.")).map((c) => [c.name.slice(5), c.type as DiskType]));
    const diskDir = opts.diskDir ?? null;
    const toDisk = new Set(chooseOnDisk(capacity, types, diskDir));
    let whole = false;
    try {
      let read = 0;
      let buffer: Uint8Array | null = null;
      for (const c of header.columns) {
        const key = c.name.startsWith("vars.") ? c.name.slice(5) : null;
        let disk: DiskColumn | null = null;
        if (key !== null && toDisk.has(key)) {
          try {
            disk = facts.disk[key] = newColumnFile(diskDir!, c.type as DiskType);
          } catch (err) {
            return { facts: null, reason: `its columns cannot be written to files in ${diskDir} (${(err as NodeJS.ErrnoException).code ?? String(err)})` };
          }
        }
        // In memory: on shared memory, as the columns a build makes (report-cache-columns.ts).
        const col = disk ? null : sharedColumn(TYPES[c.type] as unknown as { new (buffer: SharedArrayBuffer): Typed; BYTES_PER_ELEMENT: number }, capacity);
        const length = size * (TYPES[c.type] as unknown as { BYTES_PER_ELEMENT: number }).BYTES_PER_ELEMENT;
        const bytes = col ? new Uint8Array(col.buffer, 0, length) : null;
        for (let at = 0; at < length; at += PIECE) {
          if (opts.stopped?.()) throw new Error("stopped");
          const end = Math.min(length, at + PIECE);
          const piece = bytes ? bytes.subarray(at, end) : (buffer ??= new Uint8Array(PIECE)).subarray(0, end - at);
          if (!(await readFully(fh, piece))) return { facts: null, reason: "the snapshot is cut short" };
          crc = zlib.crc32(piece, crc);
          if (disk) {
            try {
              writeAt(disk.fd, piece, at);
            } catch (err) {
              return { facts: null, reason: `its columns cannot be written to files in ${diskDir} (${(err as NodeJS.ErrnoException).code ?? String(err)})` };
            }
          }
          read += piece.length;
          opts.progress?.("reading", read, columnBytes);
        }
        const padding = new Uint8Array(pad8(length));
        if (!(await readFully(fh, padding))) return { facts: null, reason: "the snapshot is cut short" };
        crc = zlib.crc32(padding, crc);
        if (col) setColumn(facts, c.name, col);
      }
      const tail = Buffer.alloc(4);
      if (!(await readFully(fh, tail))) return { facts: null, reason: "the snapshot is cut short" };
      if (tail.readUInt32LE(0) !== crc >>> 0) return { facts: null, reason: "the snapshot is damaged (its checksum does not match)" };
      if ((await fh.read(Buffer.alloc(1), 0, 1, null)).bytesRead !== 0) return { facts: null, reason: "the snapshot is longer than its header says" };
      rebuildIndex(facts);
      whole = true;
      return { facts, bytes: total };
    } finally {
      // A snapshot not taken: the files made for it go.
      if (!whole) closeDisk(facts);
    }
  } finally {
    await fh.close().catch(() => undefined);
  }
}
