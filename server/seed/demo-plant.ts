/**
 * The invented demo plant: about eight months of a two-strand slab caster (2026-04-01 … 2026-11-30).
 * Everything here is invented demo data, generated deterministically from one seed.
 *
 * How the data are made, so that the reports have something true to find:
 * 1. Sequences of 4–12 heats; each heat's steel is cast half on each strand. Per strand, a level-2
 *    sample every 20 s records speed, tundish temperature, brake current, SEN depth, argon and the mold
 *    level deviation, with a speed dip at every ladle change and a ramp at the sequence start.
 * 2. The strands are cut into slabs of 9.6–10.8 m; a slab cut across a ladle change is a transition
 *    slab. Each slab's conditions are the aggregates of the samples cast while its length passed the
 *    mold (the same rule the product applies to imported samples).
 * 3. Each defect type has a logistic model on those slab conditions, whose directions follow
 *    DOMAIN.md §3: slag entrapment rises with casting speed and speed changes and falls with brake
 *    current and SEN depth; longitudinal facial cracks cluster in peritectic grades and rise with mold
 *    level fluctuation; transition slabs and sequence starts carry more inclusion defects; pinholes
 *    rise with argon; transverse corner cracks favour micro-alloyed grades; centreline segregation
 *    rises with superheat. The magnitudes are invented.
 */
import type Database from "better-sqlite3";
import { liquidusC } from "../metallurgy/liquidus";
import { createRandom, type Random } from "./random";
import { GRADES, DEMO_CUSTOMERS, type DefectCode, type GradeSpec } from "./catalogue";
import { DISPOSITION_RANK, type Disposition, type Face, type Stage } from "@shared/domain";

export const DEMO_START = Date.UTC(2026, 3, 1, 5, 0, 0);
export const DEMO_END = Date.UTC(2026, 10, 30, 22, 0, 0);
const SAMPLE_SECONDS = 20;
const DENSITY_T_M3 = 7.8;
const THICKNESS_MM = 230;

export interface ProductionIds {
  casterId: number;
  strandIds: Record<number, number>;
  gradeIds: Record<string, number>;
  defectTypeIds: Record<string, number>;
  causeTagIds: Record<string, number>;
  users: { inspector: string; quality: string; process: string; claims: string; admin: string };
}

export interface ProductionCounts {
  sequences: number;
  heats: number;
  slabs: number;
  processSamples: number;
  defects: number;
  defectCauses: number;
  products: number;
  claims: number;
  investigations: number;
  photos?: number;
  /** The risk models trained on the demo history (server/services/risk/risk.service.ts seedRiskModels). */
  riskModels?: { target: string; auc: number | null; baselineAuc: number | null; active: boolean }[];
}

interface Sample {
  t: number;
  len: number;
  v: number;
  temp: number;
  embr: number;
  sen: number;
  argon: number;
  level: number;
}

interface HeatPlan {
  id: number;
  heatNo: string;
  grade: GradeSpec;
  liquidus: number;
  positionInSeq: number;
  tundishChange: boolean;
  /** Cumulative strand length at which this heat starts, per strand (m). */
  startLen: number[];
  endLen: number[];
}

interface SlabConditions {
  v: number;
  vRange: number;
  superheat: number;
  embr: number;
  sen: number;
  argon: number;
  levelSd: number;
}

const round = (x: number, d = 0) => {
  const f = 10 ** d;
  return Math.round(x * f) / f;
};
const clamp = (x: number, lo: number, hi: number) => Math.min(hi, Math.max(lo, x));
const logistic = (z: number) => 1 / (1 + Math.exp(-z));

/** Probability that a slab shows each defect type, from its conditions (see the header). */
function defectProbabilities(
  c: SlabConditions,
  family: string,
  transition: boolean,
  firstHeat: boolean,
  tundishChange: boolean,
): Partial<Record<DefectCode, number>> {
  const peritectic = family === "PER" ? 1 : 0;
  const micro = family === "HSLA" ? 1 : 0;
  const brakeA = c.embr;
  return {
    SLG: logistic(-3.55 + 3.0 * (c.v - 1.4) + 2.2 * Math.max(0, c.vRange - 0.1) - 0.0035 * (brakeA - 300) - 0.014 * (c.sen - 160) + 0.22 * (c.levelSd - 2.5)),
    LFC: logistic(-5.0 + 2.5 * peritectic + 0.75 * (c.levelSd - 2.5) + 0.6 * (c.v - 1.4)),
    DEP: logistic(-5.6 + 1.6 * peritectic + 0.3 * (c.levelSd - 2.5)),
    LCC: logistic(-6.3 + 0.4 * (c.v - 1.4)),
    TCC: logistic(-6.0 + 2.0 * micro),
    TRC: logistic(-6.8 + 0.8 * micro),
    STC: logistic(-7.6),
    OSM: logistic(-6.4 + 0.4 * (c.levelSd - 2.5)),
    BLD: logistic(-7.4 + 0.8 * Math.max(0, c.v - 1.6)),
    SCB: logistic(-7.0),
    PIN: logistic(-5.7 + 0.3 * (c.argon - 8)),
    BLH: logistic(-7.0 + 0.25 * (c.argon - 8)),
    CLS: logistic(-5.7 + 0.07 * (c.superheat - 25)),
    CLP: logistic(-6.6 + 0.05 * (c.superheat - 25)),
    IMC: logistic(-7.0),
    ALC: logistic(-5.5 + 1.9 * (transition ? 1 : 0) + 0.9 * (firstHeat ? 1 : 0) + 0.7 * (tundishChange ? 1 : 0)),
    SLV: logistic(-5.2 + 1.5 * (transition ? 1 : 0) + 0.6 * (firstHeat ? 1 : 0) + 1.2 * (c.v - 1.4)),
    BLI: logistic(-6.2 + 1.2 * (transition ? 1 : 0) + 0.22 * (c.argon - 8)),
    SEM: logistic(-7.0),
    LAM: logistic(-6.8 + 0.9 * (transition ? 1 : 0)),
  };
}

const FACE_BY_TYPE: Partial<Record<DefectCode, [Face, number][]>> = {
  LFC: [
    ["inner", 0.45],
    ["outer", 0.55],
  ],
  DEP: [
    ["inner", 0.5],
    ["outer", 0.5],
  ],
  LCC: [
    ["left", 0.5],
    ["right", 0.5],
  ],
  TCC: [
    ["left", 0.4],
    ["right", 0.4],
    ["inner", 0.1],
    ["outer", 0.1],
  ],
  BLD: [
    ["left", 0.5],
    ["right", 0.5],
  ],
  CLS: [["section", 1]],
  CLP: [["section", 1]],
  IMC: [["section", 1]],
  SLG: [
    ["inner", 0.7],
    ["outer", 0.3],
  ],
  PIN: [
    ["inner", 0.6],
    ["outer", 0.4],
  ],
};

const STAGE_BY_TYPE: Partial<Record<DefectCode, [Stage, number][]>> = {
  SLV: [
    ["hot_mill", 0.45],
    ["cold_mill", 0.35],
    ["customer", 0.2],
  ],
  SEM: [
    ["hot_mill", 0.6],
    ["cold_mill", 0.4],
  ],
  BLI: [
    ["cold_mill", 0.6],
    ["customer", 0.4],
  ],
  LAM: [
    ["hot_mill", 0.5],
    ["customer", 0.5],
  ],
  ALC: [
    ["after_scarfing", 0.4],
    ["cold_mill", 0.4],
    ["customer", 0.2],
  ],
  SLG: [
    ["slab_yard", 0.6],
    ["after_scarfing", 0.4],
  ],
};

function dispositionFor(severity: number, stage: Stage, r: Random): Disposition {
  if (stage === "customer" || stage === "cold_mill" || stage === "hot_mill") {
    return severity >= 3
      ? r.weighted([
          ["downgrade", 0.6],
          ["scrap", 0.4],
        ] as const)
      : r.weighted([
          ["accept", 0.5],
          ["downgrade", 0.5],
        ] as const);
  }
  switch (severity) {
    case 1:
      return r.weighted([
        ["accept", 0.75],
        ["scarf", 0.25],
      ] as const);
    case 2:
      return r.weighted([
        ["scarf", 0.55],
        ["grind", 0.35],
        ["accept", 0.1],
      ] as const);
    case 3:
      return r.weighted([
        ["grind", 0.3],
        ["downgrade", 0.4],
        ["hold", 0.3],
      ] as const);
    default:
      return r.weighted([
        ["hold", 0.4],
        ["scrap", 0.6],
      ] as const);
  }
}

/** Causes a process engineer would plausibly tag, given what drove the model (for the demo only). */
function plausibleCauses(code: DefectCode, c: SlabConditions, transition: boolean, family: string): string[] {
  switch (code) {
    case "SLG":
      if (c.embr < 150) return ["brake-off-low"];
      if (c.vRange > 0.15) return ["speed-change", "mold-level-disturbance"];
      return c.levelSd > 3 ? ["mold-level-disturbance"] : ["mold-powder"];
    case "LFC":
    case "DEP":
      return family === "PER" ? ["mold-powder", "mold-level-disturbance"] : ["mold-level-disturbance"];
    case "ALC":
    case "SLV":
    case "LAM":
    case "BLI":
      return transition ? ["ladle-change"] : code === "BLI" ? ["argon-flow"] : ["steel-cleanliness"];
    case "PIN":
    case "BLH":
      return ["argon-flow"];
    case "CLS":
    case "CLP":
      return c.superheat > 30 ? ["high-superheat"] : ["secondary-cooling"];
    case "OSM":
      return ["oscillation"];
    case "TCC":
    case "TRC":
      return ["secondary-cooling"];
    case "SCB":
      return ["handling-damage"];
    default:
      return [];
  }
}

function mean(xs: number[]) {
  return xs.reduce((s, x) => s + x, 0) / xs.length;
}
function sd(xs: number[]) {
  if (xs.length < 2) return 0;
  const m = mean(xs);
  return Math.sqrt(xs.reduce((s, x) => s + (x - m) ** 2, 0) / (xs.length - 1));
}

/**
 * Writes the whole production history in one transaction with prepared statements (hundreds of
 * thousands of rows: the ORM's per-row overhead would dominate). Returns the row counts.
 */
export function generateProduction(sqlite: Database.Database, ids: ProductionIds, scale = 1): ProductionCounts {
  const r = createRandom(20260401);
  const nSequences = Math.max(2, Math.round(250 * scale));
  const span = DEMO_END - DEMO_START;
  const counts: ProductionCounts = {
    sequences: 0,
    heats: 0,
    slabs: 0,
    processSamples: 0,
    defects: 0,
    defectCauses: 0,
    products: 0,
    claims: 0,
    investigations: 0,
  };

  const insSequence = sqlite.prepare("insert into sequences (sequence_no, caster_id, started_at, ended_at) values (?, ?, ?, ?)");
  const updSequence = sqlite.prepare("update sequences set ended_at = ? where id = ?");
  const insHeat = sqlite.prepare(`insert into heats (heat_no, sequence_id, sequence_position, caster_id, grade_id, cast_start, cast_end,
      ladle_weight_t, tundish_change, casting_speed_m_min, tundish_temp_c, liquidus_c, liquidus_source, superheat_c, superheat_source,
      embr_current_a, sen_depth_mm, argon_nl_min, mold_level_sd_mm, c_pct, si_pct, mn_pct, p_pct, s_pct, al_pct, cu_pct, ni_pct,
      cr_pct, mo_pct, ti_pct, nb_pct, v_pct, n_ppm)
      values (?, ?, ?, ?, ?, ?, null, ?, ?, ?, ?, ?, 'computed', ?, 'computed', ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`);
  const updHeat = sqlite.prepare(
    "update heats set cast_end = ?, casting_speed_m_min = ?, tundish_temp_c = ?, superheat_c = ?, mold_level_sd_mm = ? where id = ?",
  );
  const insSample = sqlite.prepare(`insert into process_samples (strand_id, sampled_at, cast_length_m, casting_speed_m_min,
      tundish_temp_c, embr_current_a, sen_depth_mm, argon_nl_min, mold_level_mm) values (?, ?, ?, ?, ?, ?, ?, ?, ?)`);
  const insSlab = sqlite.prepare(`insert into slabs (slab_id, heat_id, strand_id, piece_no, length_mm, width_mm, thickness_mm,
      weight_t, weight_source, cast_length_start_m, cast_at, transition, disposition) values (?, ?, ?, ?, ?, ?, ?, ?, 'computed', ?, ?, ?, ?)`);
  const insDefect = sqlite.prepare(`insert into defects (slab_id, type_id, face, position_along_mm, position_across_mm, length_mm,
      width_mm, depth_mm, severity, stage, disposition, note, review_status, reviewed_by, reviewed_at, client_key, found_at,
      created_by, created_at, updated_at) values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`);
  const insCause = sqlite.prepare("insert into defect_causes (defect_id, tag_id, confidence, note, created_by, created_at) values (?, ?, ?, ?, ?, ?)");
  const insProduct = sqlite.prepare("insert into products (product_id, kind, slab_id, rolled_at, weight_t) values (?, ?, ?, ?, ?)");

  const strandNos = Object.keys(ids.strandIds).map(Number).sort();
  let heatCounter = 0;
  let coilCounter = 0;
  // Defects found at a customer, for the demo claims.
  const customerFinds: { slabRowId: number; code: DefectCode; foundAt: number; weightT: number; productId: string }[] = [];

  for (let s = 0; s < nSequences; s++) {
    const seqStart = DEMO_START + Math.floor((s * span) / nSequences) + Math.floor(r.uniform(0, 3 * 3600_000));
    const seqNo = `S26-${String(s + 1).padStart(4, "0")}`;
    const seqId = Number(insSequence.run(seqNo, ids.casterId, seqStart, null).lastInsertRowid);
    counts.sequences++;
    const nHeats = clamp(Math.round(r.normal(8, 1.8)), 4, 12);
    let grade = r.weighted(GRADES.map((g) => [g, g.weight] as const));
    const gradeChangeAt = r.chance(0.2) ? r.int(2, nHeats - 1) : -1;
    const widthMm = r.pick([1250, 1400, 1500, 1500, 1600, 1750, 1900]);
    const brakePolicyA = r.weighted([
      [0, 1],
      [200, 2],
      [300, 3],
      [400, 3],
      [500, 1.5],
    ] as const);
    const senBase = round(r.uniform(120, 200) / 5) * 5;
    const argonBase = r.uniform(5, 11);
    const tundishChangeAt = nHeats >= 9 ? Math.floor(nHeats / 2) : -1;
    const strandMassPerM = DENSITY_T_M3 * (widthMm / 1000) * (THICKNESS_MM / 1000);

    const heats: HeatPlan[] = [];
    const samples: Sample[][] = strandNos.map(() => []);
    const cumLen = strandNos.map(() => 0);
    let t = seqStart;

    for (let h = 0; h < nHeats; h++) {
      if (h === gradeChangeAt) grade = r.weighted(GRADES.map((g) => [g, g.weight] as const));
      heatCounter++;
      const heatNo = `L26${String(heatCounter).padStart(4, "0")}`;
      const chem: Record<string, number> = {};
      for (const [el, aim] of Object.entries(grade.chem)) chem[el] = Math.max(0, round(aim * (1 + r.normal(0, 0.06)), 4));
      chem.cu = round(Math.abs(r.normal(0.02, 0.008)), 3);
      chem.ni = round(Math.abs(r.normal(0.015, 0.005)), 3);
      const liquidus = round(liquidusC(chem), 1);
      const tundishChange = h === tundishChangeAt;
      const superheatTarget = h === 0 ? r.normal(33, 5) : tundishChange ? r.normal(31, 4) : r.normal(24, 5);
      const tundishStart = liquidus + clamp(superheatTarget, 8, 55) + 3;
      const v0 = clamp(1.62 - 0.00035 * (widthMm - 1400) + r.normal(0, 0.07) - (superheatTarget > 32 ? 0.05 : 0), 0.9, 1.9);
      const disturbed = r.chance(0.06);
      const levelSdHeat = clamp(1.5 + 1.1 * (v0 - 1.3) + Math.abs(r.normal(0, 0.5)) + 0.05 * (argonBase - 8) + (disturbed ? 2 : 0), 0.6, 8);
      const embrHeat = brakePolicyA === 0 ? 0 : Math.max(0, round(brakePolicyA + r.normal(0, 12)));
      const senHeat = clamp(senBase + (r.chance(0.15) ? r.pick([-10, 10]) : 0), 100, 250);
      const argonHeat = clamp(argonBase + r.normal(0, 0.8), 2, 16);
      const ladleT = round(r.normal(215, 6), 1);
      const heatLenPerStrand = ladleT / strandMassPerM / strandNos.length;

      const heatId = Number(
        insHeat.run(
          heatNo,
          seqId,
          h + 1,
          ids.casterId,
          ids.gradeIds[grade.code],
          t,
          ladleT,
          tundishChange ? 1 : 0,
          round(v0, 2),
          round(tundishStart - 3, 0),
          liquidus,
          round(tundishStart - 3 - liquidus, 1),
          embrHeat,
          senHeat,
          round(argonHeat, 1),
          round(levelSdHeat, 2),
          chem.c ?? null,
          chem.si ?? null,
          chem.mn ?? null,
          chem.p ?? null,
          chem.s ?? null,
          chem.al ?? null,
          chem.cu ?? null,
          chem.ni ?? null,
          chem.cr ?? null,
          chem.mo ?? null,
          chem.ti ?? null,
          chem.nb ?? null,
          chem.v ?? null,
          round(grade.nPpm * (1 + r.normal(0, 0.1))),
        ).lastInsertRowid,
      );
      counts.heats++;
      const plan: HeatPlan = {
        id: heatId,
        heatNo,
        grade,
        liquidus,
        positionInSeq: h + 1,
        tundishChange,
        startLen: [...cumLen],
        endLen: cumLen.map((l) => l + heatLenPerStrand),
      };
      heats.push(plan);

      // Both strands cast the heat at the same time; the sample clock runs until both have cast their half.
      const heatStartT = t;
      let heatEndT = t;
      const speeds: number[] = [];
      const temps: number[] = [];
      const levels: number[] = [];
      strandNos.forEach((_, si) => {
        let tt = heatStartT;
        let len = cumLen[si]!;
        const target = plan.endLen[si]!;
        const offset = r.normal(0, 0.02);
        let k = 0;
        while (len < target) {
          const minutes = (k * SAMPLE_SECONDS) / 60;
          let v = v0 + offset + r.normal(0, 0.012);
          if (h === 0 && minutes < 6)
            v = v0 * (0.55 + 0.45 * (minutes / 6)); // start-up ramp
          else if (h > 0 && minutes < 3.5) v = v0 * 0.78; // slowed for the ladle change
          if (disturbed && minutes > 8 && minutes < 12) v = v0 * 0.85;
          v = clamp(v, 0.4, 2.2);
          const fraction = (len - cumLen[si]!) / heatLenPerStrand;
          const temp = tundishStart - 6 * fraction + r.normal(0, 0.6);
          const level = r.normal(0, levelSdHeat);
          const sample: Sample = {
            t: tt,
            len,
            v,
            temp,
            embr: embrHeat === 0 ? 0 : embrHeat + r.normal(0, 4),
            sen: senHeat,
            argon: clamp(argonHeat + r.normal(0, 0.35), 1, 20),
            level,
          };
          samples[si]!.push(sample);
          speeds.push(v);
          temps.push(temp);
          levels.push(level);
          len += (v * SAMPLE_SECONDS) / 60;
          tt += SAMPLE_SECONDS * 1000;
          k++;
        }
        cumLen[si] = len;
        plan.endLen[si] = len;
        heatEndT = Math.max(heatEndT, tt);
      });
      const tMean = mean(temps);
      updHeat.run(heatEndT, round(mean(speeds), 2), round(tMean, 0), round(tMean - liquidus, 1), round(sd(levels), 2), heatId);
      t = heatEndT + SAMPLE_SECONDS * 1000;
    }
    updSequence.run(t, seqId);

    // Samples of the sequence, then the slabs cut from each strand.
    strandNos.forEach((strandNo, si) => {
      const strandId = ids.strandIds[strandNo]!;
      const ss = samples[si]!;
      for (const x of ss) {
        insSample.run(strandId, x.t, round(x.len, 2), round(x.v, 3), round(x.temp, 1), round(x.embr, 0), x.sen, round(x.argon, 2), round(x.level, 2));
        counts.processSamples++;
      }
      const total = cumLen[si]!;
      let start = 0;
      const pieceByHeat = new Map<number, number>();
      let cursor = 0;
      while (start < total - 0.5) {
        let length = r.uniform(9.6, 10.8);
        if (total - start - length < 4) length = total - start; // the tail piece takes the remainder
        const end = start + length;
        // The heat that contributes most of the slab's length owns it.
        let owner = heats[0]!;
        let best = -1;
        let crosses = false;
        for (const hp of heats) {
          const overlap = Math.min(end, hp.endLen[si]!) - Math.max(start, hp.startLen[si]!);
          if (overlap > best) {
            best = overlap;
            owner = hp;
          }
          if (hp.startLen[si]! > start + 0.05 && hp.startLen[si]! < end - 0.05) crosses = true;
        }
        while (cursor < ss.length - 1 && ss[cursor]!.len < start) cursor++;
        const within: Sample[] = [];
        for (let j = cursor; j < ss.length && ss[j]!.len < end; j++) within.push(ss[j]!);
        if (within.length === 0) within.push(ss[Math.min(cursor, ss.length - 1)]!);
        const vs = within.map((x) => x.v);
        const cond: SlabConditions = {
          v: mean(vs),
          vRange: Math.max(...vs) - Math.min(...vs),
          superheat: mean(within.map((x) => x.temp)) - owner.liquidus,
          embr: mean(within.map((x) => x.embr)),
          sen: mean(within.map((x) => x.sen)),
          argon: mean(within.map((x) => x.argon)),
          levelSd: sd(within.map((x) => x.level)),
        };
        const piece = (pieceByHeat.get(owner.id) ?? 0) + 1;
        pieceByHeat.set(owner.id, piece);
        const slabId = `${owner.heatNo}-${strandNo}${String(piece).padStart(2, "0")}`;
        const lengthMm = round(length * 1000, -1);
        const weightT = round((lengthMm / 1000) * (widthMm / 1000) * (THICKNESS_MM / 1000) * DENSITY_T_M3, 2);
        const castAt = within[0]!.t;
        const probs = defectProbabilities(cond, owner.grade.family, crosses, owner.positionInSeq === 1, owner.tundishChange);

        type Found = { code: DefectCode; severity: number; stage: Stage; disposition: Disposition; foundAt: number; face: Face };
        const found: Found[] = [];
        for (const [code, p] of Object.entries(probs) as [DefectCode, number][]) {
          if (!r.chance(p)) continue;
          const n = 1 + (r.chance(0.25) ? r.poisson(0.6) : 0);
          for (let k = 0; k < n; k++) {
            const stage = STAGE_BY_TYPE[code]
              ? r.weighted(STAGE_BY_TYPE[code]!)
              : r.weighted([
                  ["slab_yard", 0.85],
                  ["after_scarfing", 0.15],
                ] as const);
            const severity = r.weighted([
              [1, 0.35],
              [2, 0.38],
              [3, 0.2],
              [4, 0.07],
            ] as const);
            const delayH =
              stage === "slab_yard"
                ? r.uniform(4, 30)
                : stage === "after_scarfing"
                  ? r.uniform(20, 72)
                  : stage === "hot_mill"
                    ? r.uniform(72, 200)
                    : stage === "cold_mill"
                      ? r.uniform(200, 500)
                      : r.uniform(500, 1500);
            const foundAt = castAt + Math.round(delayH * 3600_000);
            if (foundAt > DEMO_END + 12 * 3600_000) continue; // not found yet
            const face = FACE_BY_TYPE[code]
              ? r.weighted(FACE_BY_TYPE[code]!)
              : r.weighted([
                  ["inner", 0.5],
                  ["outer", 0.4],
                  ["left", 0.05],
                  ["right", 0.05],
                ] as const);
            found.push({ code, severity, stage, disposition: dispositionFor(severity, stage, r), foundAt, face });
          }
        }
        let worst: Disposition | null = null;
        for (const f of found) if (worst === null || DISPOSITION_RANK[f.disposition] > DISPOSITION_RANK[worst]) worst = f.disposition;

        const slabRowId = Number(
          insSlab.run(slabId, owner.id, strandId, piece, lengthMm, widthMm, THICKNESS_MM, weightT, round(start, 2), castAt, crosses ? 1 : 0, worst)
            .lastInsertRowid,
        );
        counts.slabs++;

        let productId: string | null = null;
        const rolledAt = castAt + Math.round(r.uniform(2, 6) * 86400_000);
        if (rolledAt < DEMO_END && worst !== "scrap") {
          coilCounter++;
          const plate = owner.grade.family === "PER" && r.chance(0.3);
          productId = `${plate ? "P" : "K"}26${String(coilCounter).padStart(6, "0")}`;
          insProduct.run(productId, plate ? "plate" : "coil", slabRowId, rolledAt, round(weightT * 0.985, 2));
          counts.products++;
        }

        for (const f of found) {
          const faceAcross = f.face === "left" || f.face === "right" || f.face === "section" ? THICKNESS_MM : widthMm;
          const along = round(r.uniform(0.02, 0.98) * lengthMm, -1);
          const across =
            f.code === "TCC" || f.code === "LCC"
              ? r.chance(0.5)
                ? round(r.uniform(0, 40))
                : round(faceAcross - r.uniform(0, 40))
              : f.code === "CLS" || f.code === "CLP"
                ? round(faceAcross / 2 + r.normal(0, 8))
                : round(r.uniform(0.05, 0.95) * faceAcross);
          const lengthDefect = f.code === "LFC" || f.code === "LCC" ? round(r.uniform(150, 1800), -1) : round(r.uniform(5, 120));
          const depth = f.face === "section" ? null : round(r.uniform(0.3, 6), 1);
          const ageDays = (DEMO_END - f.foundAt) / 86400_000;
          const review =
            ageDays < 3
              ? "new"
              : r.weighted([
                  ["confirmed", 0.88],
                  ["corrected", 0.08],
                  ["rejected", 0.04],
                ] as const);
          const by = f.stage === "slab_yard" || f.stage === "after_scarfing" ? ids.users.inspector : ids.users.quality;
          const reviewedAt = review === "new" ? null : f.foundAt + Math.round(r.uniform(2, 40) * 3600_000);
          const defectId = Number(
            insDefect.run(
              slabRowId,
              ids.defectTypeIds[f.code],
              f.face,
              along,
              clamp(across, 0, faceAcross),
              lengthDefect,
              round(r.uniform(3, 60)),
              depth,
              f.severity,
              f.stage,
              f.disposition,
              null,
              review,
              review === "new" ? null : ids.users.quality,
              reviewedAt,
              `demo-${counts.defects + 1}`,
              f.foundAt,
              by,
              f.foundAt,
              reviewedAt ?? f.foundAt,
            ).lastInsertRowid,
          );
          counts.defects++;
          if (f.stage === "customer" && productId) customerFinds.push({ slabRowId, code: f.code, foundAt: f.foundAt, weightT, productId });
          if (ageDays > 14 && review !== "rejected" && r.chance(0.45)) {
            const tags = plausibleCauses(f.code, cond, crosses, owner.grade.family);
            for (const tag of tags.slice(0, r.chance(0.3) ? 2 : 1)) {
              insCause.run(
                defectId,
                ids.causeTagIds[tag],
                r.weighted([
                  ["suspected", 0.4],
                  ["probable", 0.4],
                  ["confirmed", 0.2],
                ] as const),
                null,
                ids.users.process,
                f.foundAt + Math.round(r.uniform(1, 7) * 86400_000),
              );
              counts.defectCauses++;
            }
          }
        }
        start = end;
      }
    });
  }

  counts.claims = generateClaims(sqlite, r, ids, customerFinds);
  counts.investigations = generateInvestigations(sqlite, ids, scale);
  return counts;
}

function generateClaims(
  sqlite: Database.Database,
  r: Random,
  ids: ProductionIds,
  finds: { slabRowId: number; code: DefectCode; foundAt: number; weightT: number; productId: string }[],
): number {
  const insClaim = sqlite.prepare(`insert into claims (claim_no, customer, product_ids, received_on, defect_complained, quantity_t,
      status, notes, created_by, created_at, updated_at) values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`);
  const insLink = sqlite.prepare("insert into claim_slabs (claim_id, slab_id, linked_via, linked_by, linked_at) values (?, ?, 'trace', ?, ?)");
  const insAudit = sqlite.prepare(
    "insert into audit_log (at, user_id, user_name, action, entity, entity_id, after) select @at, @u, (select name from user where id = @u), 'claim.create', 'claim', @id, @after",
  );
  const insAudit2 = sqlite.prepare(
    "insert into audit_log (at, user_id, user_name, action, entity, entity_id, after) select @at, @u, (select name from user where id = @u), 'claim.update', 'claim', @id, @after",
  );
  const names: Partial<Record<DefectCode, string>> = { SLV: "slivers", BLI: "blisters", LAM: "laminations", ALC: "inclusion lines" };
  let n = 0;
  const picked = finds
    .filter((_, i) => i % 3 === 0)
    .slice(0, 14)
    .sort((a, b) => a.foundAt - b.foundAt);
  for (const [k, f] of picked.entries()) {
    n++;
    const received = f.foundAt + Math.round(r.uniform(1, 5) * 86400_000);
    // The newest claims are still open (a claim takes weeks): the officer's day always has some to work on.
    const open = received > DEMO_END - 20 * 86400_000 || k >= picked.length - 3;
    const status = open ? (k === picked.length - 1 ? "new" : r.pick(["new", "under_review"])) : r.pick(["accepted", "rejected", "closed", "accepted"]);
    const receivedOn = new Date(Math.min(received, DEMO_END)).toISOString().slice(0, 10);
    const claimId = Number(
      insClaim.run(
        `CL-26-${String(n).padStart(3, "0")}`,
        r.pick(DEMO_CUSTOMERS),
        f.productId,
        receivedOn,
        `Customer reports ${names[f.code] ?? "surface defects"} on ${f.productId}`,
        round(f.weightT * 0.98, 1),
        status,
        "Invented demo claim.",
        ids.users.claims,
        received,
        received,
      ).lastInsertRowid,
    );
    insLink.run(claimId, f.slabRowId, ids.users.claims, received);
    // The claim's own history, as recording it through the app would have left it.
    insAudit.run({
      at: received,
      u: ids.users.claims,
      id: claimId,
      after: JSON.stringify({ claimNo: `CL-26-${String(n).padStart(3, "0")}`, productIds: [f.productId], linked: 1 }),
    });
    if (status !== "new") insAudit2.run({ at: received + 86400_000, u: ids.users.claims, id: claimId, after: JSON.stringify({ status }) });
  }
  return n;
}

function generateInvestigations(sqlite: Database.Database, ids: ProductionIds, scale: number): number {
  // Three invented investigations around the patterns the model plants in the data.
  const insInv = sqlite.prepare(`insert into investigations (ref, title, problem_statement, status, owner_id, opened_at, closed_at,
      confirmed_cause_tag_id, closure_note, created_by) values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`);
  const insAction = sqlite.prepare(`insert into investigation_actions (investigation_id, description, owner_id, due_on, status, completed_at)
      values (?, ?, ?, ?, ?, ?)`);
  // Dated as the work happened: a hypothesis the week it was put forward, not on the seeding day.
  const insHypAt = sqlite.prepare(`insert into investigation_hypotheses (investigation_id, statement, cause_tag_id, status, created_by, created_at, updated_at)
      values (?, ?, ?, ?, ?, ?, ?)`);
  // The investigation's history, as working it through the app would have left it (the same actions
  // and payloads as investigations.service writes).
  const insAudit = sqlite.prepare(
    "insert into audit_log (at, user_id, user_name, action, entity, entity_id, after) select @at, @u, (select name from user where id = @u), @action, 'investigation', @id, @after",
  );
  const history = (id: number, at: number, u: string, action: string, after: unknown) =>
    insAudit.run({ at, u, action, id: String(id), after: JSON.stringify(after) });
  const insHyp = (inv: number, statement: string, tag: number | null | undefined, status: string, by: string, at: number) => {
    insHypAt.run(inv, statement, tag ?? null, status, by, at, at);
    history(inv, at, by, "investigation.hypothesis.add", { statement, causeTag: tag ?? null, status });
  };
  const insSubject = sqlite.prepare("insert into investigation_subjects (investigation_id, heat_id) values (?, ?)");
  const heatIds = sqlite
    .prepare(
      `select h.id from heats h join slabs s on s.heat_id = h.id join defects d on d.slab_id = s.id
       join defect_types t on t.id = d.type_id where t.code = 'SLG' group by h.id order by count(*) desc limit ?`,
    )
    .pluck()
    .all(Math.max(2, Math.round(6 * scale))) as number[];
  const day = (iso: string) => Date.parse(iso + "T08:00:00Z");

  const a = Number(
    insInv.run(
      "INV-2026-001",
      "Slag spots on wide, fast heats",
      "Slag spots on the inner face rose in July on heats cast above 1.5 m/min. Find whether brake current and SEN depth explain it.",
      "closed",
      ids.users.process,
      day("2026-07-20"),
      day("2026-09-02"),
      ids.causeTagIds["brake-off-low"],
      "Heats cast with the brake off or below 200 A carried most slag spots. Brake practice reviewed through the plant's change procedure.",
      ids.users.process,
    ).lastInsertRowid,
  );
  history(a, day("2026-07-20"), ids.users.process, "investigation.open", { ref: "INV-2026-001", title: "Slag spots on wide, fast heats" });
  insHyp(
    a,
    "Low or no brake current lets the meniscus flow entrain flux at high throughput.",
    ids.causeTagIds["brake-off-low"],
    "supported",
    ids.users.process,
    day("2026-07-22"),
  );
  insHyp(a, "Shallow SEN immersion raises the surface velocity.", null, "open", ids.users.process, day("2026-07-24"));
  history(a, day("2026-09-02"), ids.users.process, "investigation.close", { confirmedCause: "brake-off-low" });
  insAction.run(a, "Compare slag spot rates by brake current band (report)", ids.users.quality, "2026-08-05", "done", day("2026-08-04"));
  insAction.run(a, "Review brake practice with the caster's metallurgists", ids.users.process, "2026-08-25", "done", day("2026-08-28"));
  history(a, day("2026-07-24"), ids.users.process, "investigation.action.add", {
    description: "Compare slag spot rates by brake current band (report)",
    dueOn: "2026-08-05",
  });
  history(a, day("2026-07-24"), ids.users.process, "investigation.action.add", {
    description: "Review brake practice with the caster's metallurgists",
    dueOn: "2026-08-25",
  });
  history(a, day("2026-08-04"), ids.users.quality, "investigation.action.update", { status: "done" });
  history(a, day("2026-08-28"), ids.users.process, "investigation.action.update", { status: "done" });
  for (const h of heatIds) insSubject.run(a, h);

  const b = Number(
    insInv.run(
      "INV-2026-002",
      "Longitudinal facial cracks on peritectic grades",
      "LFC on LV-ST32/LV-ST36 slabs; check mold powder and mold level stability.",
      "in_progress",
      ids.users.process,
      day("2026-10-06"),
      null,
      null,
      null,
      ids.users.process,
    ).lastInsertRowid,
  );
  history(b, day("2026-10-06"), ids.users.process, "investigation.open", { ref: "INV-2026-002", title: "Longitudinal facial cracks on peritectic grades" });
  insHyp(b, "Mold level fluctuation above 3 mm drives the cracks.", ids.causeTagIds["mold-level-disturbance"], "open", ids.users.process, day("2026-10-08"));
  history(b, day("2026-10-13"), ids.users.process, "investigation.action.add", {
    description: "Trial of the alternative mold powder on two sequences",
    dueOn: "2026-11-20",
  });
  history(b, day("2026-10-13"), ids.users.process, "investigation.action.add", {
    description: "Check the mold level sensor calibration on strand 2",
    dueOn: "2026-11-10",
  });
  insAction.run(b, "Trial of the alternative mold powder on two sequences", ids.users.process, "2026-11-20", "in_progress", null);
  insAction.run(b, "Check the mold level sensor calibration on strand 2", ids.users.admin, "2026-11-10", "open", null);
  const lfcHeats = sqlite
    .prepare(
      `select h.id from heats h join slabs s on s.heat_id = h.id join defects d on d.slab_id = s.id join defect_types t on t.id = d.type_id
       join grades g on g.id = h.grade_id where t.code = 'LFC' and g.code in ('LV-ST32', 'LV-ST36') group by h.id order by count(*) desc, h.id limit ?`,
    )
    .pluck()
    .all(Math.max(2, Math.round(4 * scale))) as number[];
  for (const h of lfcHeats) insSubject.run(b, h);

  const c = Number(
    insInv.run(
      "INV-2026-003",
      "Slivers on transition coils",
      "Customer slivers traced to transition slabs after ladle changes.",
      "open",
      ids.users.process,
      day("2026-11-18"),
      null,
      null,
      null,
      ids.users.process,
    ).lastInsertRowid,
  );
  history(c, day("2026-11-18"), ids.users.process, "investigation.open", { ref: "INV-2026-003", title: "Slivers on transition coils" });
  insAction.run(c, "List transition slabs for extra scarfing", ids.users.quality, "2026-12-15", "open", null);
  history(c, day("2026-11-18"), ids.users.process, "investigation.action.add", {
    description: "List transition slabs for extra scarfing",
    dueOn: "2026-12-15",
  });
  const insDefectSubject = sqlite.prepare("insert into investigation_subjects (investigation_id, defect_id) values (?, ?)");
  const transitionSlivers = sqlite
    .prepare(
      `select d.id from defects d join slabs s on s.id = d.slab_id join defect_types t on t.id = d.type_id
       where t.code = 'SLV' and s.transition = 1 and d.deleted_at is null order by d.found_at desc, d.id limit 8`,
    )
    .pluck()
    .all() as number[];
  for (const d of transitionSlivers) insDefectSubject.run(c, d);
  return 3;
}
