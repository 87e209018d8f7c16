/**
 * Slab facts for the reports, held in memory as typed columns (one Float64Array per variable, small
 * integer arrays for where each slab sits). SQLite reads rows: a report over a million slabs and
 * twenty-odd variables spends seconds in the row engine, while scanning a typed column takes
 * milliseconds. SQLite stays the record; this is a read cache of slab_conditions.
 *
 * Freshness: everything that writes slab_conditions (the condition resolver, grade changes) tells
 * this module which slabs changed; those rows are read again before the next report (new slabs are
 * appended), and a change it cannot name rebuilds the whole cache on the next report.
 * Written here because no well-kept library offers typed column caching over better-sqlite3.
 */
import type Database from "better-sqlite3";
import { VARIABLES } from "@shared/variables";
import type { Db } from "../db/client";

export const FACT_VARIABLES = VARIABLES.map((v) => v.key);

export interface SlabFacts {
  size: number;
  slabId: Int32Array;
  castAt: Float64Array;
  casterId: Int32Array;
  strandId: Int32Array;
  /** The slab's heat (slabs of one heat share its heat-level values: the clusters of robust SEs). */
  heatId: Int32Array;
  gradeId: Int32Array;
  familyId: Int32Array;
  transition: Uint8Array;
  sequencePosition: Int32Array;
  weightT: Float64Array;
  /** NaN where the slab has no value. */
  vars: Record<string, Float64Array>;
  /** slab row id → index in the columns (−1 when absent). */
  indexOf: Int32Array;
}

interface State {
  facts: SlabFacts | null;
  dirtyAll: boolean;
  dirty: Set<number>;
}

const states = new WeakMap<Database.Database, State>();
const stateOf = (sqlite: Database.Database): State => {
  let s = states.get(sqlite);
  if (!s) states.set(sqlite, (s = { facts: null, dirtyAll: true, dirty: new Set() }));
  return s;
};

type FactsListener = (slabIds: number[] | null) => void;
const listeners = new Set<FactsListener>();

/**
 * Hears every change reported below. The import worker writes through its own connection; it
 * listens here and hands the slab ids back, so the server's cache (held per connection) learns them.
 */
export function onSlabFactsChanged(listener: FactsListener): () => void {
  listeners.add(listener);
  return () => listeners.delete(listener);
}

/** Call after writing slab_conditions: the named slabs, or all when not named. */
export function slabFactsChanged(db: Db, slabIds?: Iterable<number>) {
  if (listeners.size > 0) {
    const ids = slabIds ? [...slabIds] : null;
    for (const l of listeners) l(ids);
    slabIds = ids ?? undefined;
  }
  const s = stateOf(db.$client);
  if (!slabIds) {
    s.dirtyAll = true;
    s.dirty.clear();
    return;
  }
  if (s.dirtyAll) return;
  for (const id of slabIds) s.dirty.add(id);
  // Past a point a rebuild is cheaper than many single-row reads.
  if (s.dirty.size > 50_000) {
    s.dirtyAll = true;
    s.dirty.clear();
  }
}

const COLUMNS = `slab_id, cast_at, caster_id, strand_id, grade_id, family_id, transition, sequence_position, weight_t, heat_id, ${FACT_VARIABLES.join(", ")}`;

function allocate(capacity: number, maxId: number): SlabFacts {
  const vars: Record<string, Float64Array> = {};
  for (const k of FACT_VARIABLES) vars[k] = new Float64Array(capacity);
  const indexOf = new Int32Array(maxId + 1).fill(-1);
  return {
    size: 0, slabId: new Int32Array(capacity), castAt: new Float64Array(capacity), casterId: new Int32Array(capacity), strandId: new Int32Array(capacity), heatId: new Int32Array(capacity),
    gradeId: new Int32Array(capacity), familyId: new Int32Array(capacity), transition: new Uint8Array(capacity), sequencePosition: new Int32Array(capacity),
    weightT: new Float64Array(capacity), vars, indexOf,
  };
}

function put(f: SlabFacts, i: number, r: (number | null)[]) {
  f.slabId[i] = r[0]!;
  f.castAt[i] = r[1] ?? NaN;
  f.casterId[i] = r[2] ?? 0;
  f.strandId[i] = r[3] ?? 0;
  f.gradeId[i] = r[4] ?? 0;
  f.familyId[i] = r[5] ?? 0;
  f.transition[i] = r[6] ? 1 : 0;
  f.sequencePosition[i] = r[7] ?? 0;
  f.weightT[i] = r[8] ?? NaN;
  f.heatId[i] = r[9] ?? 0;
  for (let k = 0; k < FACT_VARIABLES.length; k++) f.vars[FACT_VARIABLES[k]!]![i] = r[10 + k] ?? NaN;
  f.indexOf[r[0]!] = i;
}

function build(sqlite: Database.Database): SlabFacts {
  const n = sqlite.prepare("select count(*) from slab_conditions").pluck().get() as number;
  const maxId = (sqlite.prepare("select coalesce(max(slab_id), 0) from slab_conditions").pluck().get() as number) ?? 0;
  const f = allocate(Math.max(16, Math.ceil(n * 1.1)), Math.max(16, Math.ceil(maxId * 1.1)));
  let i = 0;
  for (const r of sqlite.prepare(`select ${COLUMNS} from slab_conditions order by slab_id`).raw().iterate() as IterableIterator<(number | null)[]>) {
    put(f, i++, r);
  }
  f.size = i;
  return f;
}

function grow(f: SlabFacts, minCapacity: number, minId: number): SlabFacts {
  const cap = f.slabId.length;
  const needCap = minCapacity > cap;
  const needIds = minId >= f.indexOf.length;
  if (!needCap && !needIds) return f;
  const g = allocate(needCap ? Math.max(minCapacity, cap * 2) : cap, needIds ? Math.max(minId + 1, f.indexOf.length * 2) : f.indexOf.length - 1);
  for (const key of ["slabId", "castAt", "casterId", "strandId", "heatId", "gradeId", "familyId", "transition", "sequencePosition", "weightT"] as const) {
    (g[key] as Float64Array).set((f[key] as Float64Array).subarray(0, f.size));
  }
  for (const k of FACT_VARIABLES) g.vars[k]!.set(f.vars[k]!.subarray(0, f.size));
  g.indexOf.set(f.indexOf.subarray(0, Math.min(f.indexOf.length, g.indexOf.length)));
  g.size = f.size;
  return g;
}

/** The facts, fresh: rebuilt or patched as the recorded changes require. */
export function slabFacts(db: Db): SlabFacts {
  const sqlite = db.$client;
  const s = stateOf(sqlite);
  if (!s.facts || s.dirtyAll) {
    s.facts = build(sqlite);
    s.dirtyAll = false;
    s.dirty.clear();
    return s.facts;
  }
  if (s.dirty.size > 0) {
    const ids = [...s.dirty].sort((a, b) => a - b);
    s.dirty.clear();
    let f = s.facts;
    const stmt = sqlite.prepare(`select ${COLUMNS} from slab_conditions where slab_id in (${Array(500).fill("?").join(",")})`).raw();
    for (let k = 0; k < ids.length; k += 500) {
      const chunk = ids.slice(k, k + 500);
      const rows = (chunk.length === 500 ? stmt : sqlite.prepare(`select ${COLUMNS} from slab_conditions where slab_id in (${chunk.map(() => "?").join(",")})`).raw()).all(
        ...chunk,
      ) as (number | null)[][];
      f = grow(f, f.size + rows.length, chunk[chunk.length - 1]!);
      for (const r of rows) {
        const at = r[0]! < f.indexOf.length ? f.indexOf[r[0]!]! : -1;
        put(f, at >= 0 ? at : f.size++, r);
      }
    }
    s.facts = f;
  }
  return s.facts;
}
