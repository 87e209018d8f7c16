// Reference data of the invented demo plant: the works, its caster, grades, the defect catalogue
// and the cause taxonomy. Defect and cause names are the trade's own terms (DOMAIN.md §3); codes,
// grade names and the works are invented.
import type { EmbrCalibration } from "../db/schema";
import { WON_THOMAS_2001 } from "../metallurgy/liquidus";

export const DEMO_WORKS = "Larkspur Valley Works (invented demo plant)";
export const DEMO_CASTER = {
  code: "CC2",
  name: "Caster 2 — two-strand curved slab caster",
  radiusM: 9.5,
};

export const DEMO_STRANDS: {
  strandNo: number;
  moldThicknessMm: number;
  moldWidthMinMm: number;
  moldWidthMaxMm: number;
  moldEffectiveLengthMm: number;
  senPortAreaMm2: number;
  senPortCount: number;
  embrCalibration: EmbrCalibration;
  embrPositionMm: number;
}[] = [
  {
    strandNo: 1,
    moldThicknessMm: 230,
    moldWidthMinMm: 900,
    moldWidthMaxMm: 2100,
    moldEffectiveLengthMm: 800,
    senPortAreaMm2: 6400,
    senPortCount: 2,
    embrCalibration: { kind: "linear", teslaPerAmp: 0.00075, offsetT: 0 },
    embrPositionMm: 450,
  },
  {
    strandNo: 2,
    moldThicknessMm: 230,
    moldWidthMinMm: 900,
    moldWidthMaxMm: 2100,
    moldEffectiveLengthMm: 800,
    senPortAreaMm2: 6400,
    senPortCount: 2,
    // This brake saturates at high current: a measured table rather than a straight line.
    embrCalibration: {
      kind: "table",
      points: [
        [0, 0],
        [200, 0.15],
        [400, 0.28],
        [600, 0.36],
      ],
    },
    embrPositionMm: 450,
  },
];

export const DEMO_SETTINGS: Record<string, unknown> = {
  "demo.plant": { invented: true, note: "Every heat, slab, defect, customer and claim in this database is invented demo data." },
  "metallurgy.liquidus": { ...WON_THOMAS_2001, source: "Won & Thomas 2001, Metall. Mater. Trans. A 32A:1755, Table I" },
  // DOMAIN.md §4: K ≈ 20 mm/√min in the mold (Britannica); 25–30 along slab strands (recalled, a plant setting).
  "metallurgy.shellK": { moldMmPerSqrtMin: 20, strandMmPerSqrtMin: 27 },
  "metallurgy.density": { solidTPerM3: 7.8, liquidTPerM3: 7.0 },
  "metallurgy.steelProperties": { conductivitySPerM: 7.14e5, densityKgPerM3: 7000, viscosityPaS: 0.0063 },
};

export interface GradeSpec {
  code: string;
  name: string;
  family: string;
  weight: number;
  chem: Record<string, number>;
  nPpm: number;
}

export const GRADE_FAMILIES = [
  { code: "ULC", name: "Ultra-low carbon (IF)", description: "C below 0.01 %, Ti or Nb stabilised" },
  { code: "LC", name: "Low carbon, Al-killed", description: "C 0.02–0.07 %" },
  { code: "PER", name: "Peritectic", description: "C about 0.09–0.15 %: prone to longitudinal facial cracks and depressions" },
  { code: "MC", name: "Medium carbon", description: "C 0.25–0.50 %" },
  { code: "HSLA", name: "Micro-alloyed (Nb/V/Ti)", description: "Prone to transverse corner cracks in the ductility trough" },
];

export const GRADES: GradeSpec[] = [
  {
    code: "LV-IF01",
    name: "Interstitial-free deep drawing",
    family: "ULC",
    weight: 9,
    chem: { c: 0.003, si: 0.01, mn: 0.12, p: 0.01, s: 0.008, al: 0.04, ti: 0.06 },
    nPpm: 30,
  },
  {
    code: "LV-IF02",
    name: "Interstitial-free, exposed panel",
    family: "ULC",
    weight: 6,
    chem: { c: 0.002, si: 0.01, mn: 0.1, p: 0.012, s: 0.007, al: 0.045, ti: 0.05, nb: 0.01 },
    nPpm: 28,
  },
  { code: "LV-DQ10", name: "Drawing quality", family: "LC", weight: 16, chem: { c: 0.04, si: 0.02, mn: 0.22, p: 0.012, s: 0.009, al: 0.04 }, nPpm: 40 },
  { code: "LV-CQ12", name: "Commercial quality", family: "LC", weight: 14, chem: { c: 0.06, si: 0.03, mn: 0.3, p: 0.015, s: 0.01, al: 0.035 }, nPpm: 45 },
  { code: "LV-ST32", name: "Structural 320", family: "PER", weight: 12, chem: { c: 0.12, si: 0.2, mn: 0.9, p: 0.015, s: 0.008, al: 0.03 }, nPpm: 55 },
  { code: "LV-ST36", name: "Structural 360", family: "PER", weight: 10, chem: { c: 0.14, si: 0.25, mn: 1.3, p: 0.016, s: 0.006, al: 0.03 }, nPpm: 60 },
  {
    code: "LV-MC45",
    name: "Medium carbon 45",
    family: "MC",
    weight: 6,
    chem: { c: 0.42, si: 0.25, mn: 0.7, p: 0.015, s: 0.012, al: 0.025, cr: 0.15 },
    nPpm: 60,
  },
  {
    code: "LV-HS50",
    name: "High-strength 500",
    family: "HSLA",
    weight: 8,
    chem: { c: 0.07, si: 0.15, mn: 1.4, p: 0.012, s: 0.004, al: 0.035, nb: 0.03, v: 0.05 },
    nPpm: 55,
  },
  {
    code: "LV-HS60",
    name: "High-strength 600",
    family: "HSLA",
    weight: 6,
    chem: { c: 0.08, si: 0.2, mn: 1.6, p: 0.01, s: 0.003, al: 0.035, nb: 0.04, ti: 0.015 },
    nPpm: 50,
  },
];

export const DEFECT_CATEGORIES = [
  { code: "CRACK", name: "Surface cracks", sortOrder: 1 },
  { code: "SURFACE", name: "Other surface defects", sortOrder: 2 },
  { code: "ENTRAP", name: "Subsurface gas and flux entrapment", sortOrder: 3 },
  { code: "INTERNAL", name: "Internal defects", sortOrder: 4 },
  { code: "INCLUSION", name: "Inclusion-related (often after rolling)", sortOrder: 5 },
];

export const DEFECT_TYPES = [
  { code: "LFC", name: "Longitudinal facial crack", category: "CRACK" },
  { code: "LCC", name: "Longitudinal corner crack", category: "CRACK" },
  { code: "TRC", name: "Transverse crack", category: "CRACK" },
  { code: "TCC", name: "Transverse corner crack", category: "CRACK" },
  { code: "STC", name: "Star crack", category: "CRACK" },
  { code: "DEP", name: "Depression", category: "SURFACE" },
  { code: "OSM", name: "Deep oscillation marks", category: "SURFACE" },
  { code: "BLD", name: "Bleed", category: "SURFACE" },
  { code: "SCB", name: "Scab", category: "SURFACE" },
  { code: "PIN", name: "Pinholes", category: "ENTRAP" },
  { code: "BLH", name: "Blowholes", category: "ENTRAP" },
  { code: "SLG", name: "Mold-flux / slag entrapment (slag spot)", category: "ENTRAP" },
  { code: "CLS", name: "Centreline segregation", category: "INTERNAL" },
  { code: "CLP", name: "Centreline porosity", category: "INTERNAL" },
  { code: "IMC", name: "Internal (midway) crack", category: "INTERNAL" },
  { code: "SLV", name: "Sliver", category: "INCLUSION" },
  { code: "SEM", name: "Seam", category: "INCLUSION" },
  { code: "BLI", name: "Blister / pencil pipe", category: "INCLUSION" },
  { code: "LAM", name: "Lamination", category: "INCLUSION" },
  { code: "ALC", name: "Alumina cluster", category: "INCLUSION" },
] as const;

export type DefectCode = (typeof DEFECT_TYPES)[number]["code"];

export const CAUSE_GROUPS = [
  { code: "process", name: "Process", sortOrder: 1 },
  { code: "equipment", name: "Equipment", sortOrder: 2 },
  { code: "material", name: "Material", sortOrder: 3 },
  { code: "handling", name: "Handling", sortOrder: 4 },
  { code: "measurement", name: "Measurement", sortOrder: 5 },
];

export const CAUSE_TAGS = [
  { code: "mold-level-disturbance", name: "Mold level disturbance", group: "process" },
  { code: "speed-change", name: "Casting speed change", group: "process" },
  { code: "high-superheat", name: "High superheat", group: "process" },
  { code: "low-superheat", name: "Low superheat", group: "process" },
  { code: "ladle-change", name: "Ladle change", group: "process" },
  { code: "tundish-change", name: "Tundish change", group: "process" },
  { code: "argon-flow", name: "Argon flow out of range", group: "process" },
  { code: "brake-off-low", name: "Brake off or low", group: "equipment" },
  { code: "sen-clogging", name: "SEN clogging", group: "equipment" },
  { code: "oscillation", name: "Mold oscillation fault", group: "equipment" },
  { code: "secondary-cooling", name: "Secondary cooling fault", group: "equipment" },
  { code: "mold-powder", name: "Mold powder behaviour", group: "material" },
  { code: "steel-cleanliness", name: "Steel cleanliness (ladle)", group: "material" },
  { code: "handling-damage", name: "Handling damage", group: "handling" },
  { code: "inspection-miss", name: "Missed at inspection", group: "measurement" },
];

export const DEMO_USERS = [
  { email: "inspector@demo.test", name: "Ines Varga (demo inspector)", roles: ["inspector"] },
  { email: "quality@demo.test", name: "Quentin Olsen (demo quality engineer)", roles: ["quality"] },
  { email: "process@demo.test", name: "Priya Raman (demo process engineer)", roles: ["process"] },
  { email: "claims@demo.test", name: "Clara Mbeki (demo claims officer)", roles: ["claims"] },
  { email: "admin@demo.test", name: "Adam Novak (demo administrator)", roles: ["admin"] },
] as const;

export const DEMO_CUSTOMERS = [
  "Brightwater Pressings (demo)",
  "Tarnview Tube (demo)",
  "Alder Appliance Panels (demo)",
  "Northgate Wheels (demo)",
  "Kelp Harbour Containers (demo)",
];
