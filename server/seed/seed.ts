import { eq, sql } from "drizzle-orm";
import type { Auth } from "../auth";
import type { Db } from "../db/client";
import { casters, causeGroups, causeTags, defectCategories, defectTypes, gradeFamilies, grades, heats, plantSettings, strands, user } from "../db/schema";
import { recordAudit } from "../services/audit.service";
import { createUser } from "../services/users.service";
import {
  CAUSE_GROUPS,
  CAUSE_TAGS,
  DEFECT_CATEGORIES,
  DEFECT_TYPES,
  DEMO_CASTER,
  DEMO_SETTINGS,
  DEMO_STRANDS,
  DEMO_USERS,
  DEMO_WORKS,
  GRADE_FAMILIES,
  GRADES,
} from "./catalogue";
import { createResolver } from "../services/conditions.service";
import { addDemoPhotos } from "./demo-photos";
import { generateProduction, type ProductionCounts } from "./demo-plant";
import { seedRiskModels } from "../services/risk/risk.service";
import { seedOperatingWindows } from "../services/operating-windows.service";
import { generateLastShifts, type LastShiftsCounts } from "./last-shifts";

export interface SeedResult {
  usersCreated: number;
  /** The eight months of history; `lastShifts` are the shifts cast up to the moment of seeding. */
  production: (ProductionCounts & { lastShifts: LastShiftsCounts }) | null;
  seconds: number;
}

const byCode = <T extends { id: number; code: string }>(rows: T[]) => Object.fromEntries(rows.map((r) => [r.code, r.id]));

type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];

/**
 * The demo plant's reference data — settings, caster and strands, grades, the defect catalogue and
 * the cause taxonomy — each row only when missing. Returns the caster row.
 */
export function seedReference(tx: Tx | Db) {
  for (const [key, value] of Object.entries(DEMO_SETTINGS)) {
    tx.insert(plantSettings).values({ key, value }).onConflictDoNothing().run();
  }
  tx.insert(casters)
    .values({ code: DEMO_CASTER.code, name: DEMO_CASTER.name, worksName: DEMO_WORKS, machineType: "curved", radiusM: DEMO_CASTER.radiusM })
    .onConflictDoNothing()
    .run();
  const caster = tx.select().from(casters).where(eq(casters.code, DEMO_CASTER.code)).get()!;
  for (const s of DEMO_STRANDS)
    tx.insert(strands)
      .values({ ...s, casterId: caster.id })
      .onConflictDoNothing()
      .run();
  for (const f of GRADE_FAMILIES) tx.insert(gradeFamilies).values(f).onConflictDoNothing().run();
  const families = byCode(tx.select().from(gradeFamilies).all());
  for (const g of GRADES) {
    tx.insert(grades).values({ code: g.code, name: g.name, familyId: families[g.family]!, cAimPct: g.chem.c }).onConflictDoNothing().run();
  }
  for (const c of DEFECT_CATEGORIES) tx.insert(defectCategories).values(c).onConflictDoNothing().run();
  const categories = byCode(tx.select().from(defectCategories).all());
  for (const t of DEFECT_TYPES) {
    tx.insert(defectTypes).values({ code: t.code, name: t.name, categoryId: categories[t.category]! }).onConflictDoNothing().run();
  }
  for (const g of CAUSE_GROUPS) tx.insert(causeGroups).values(g).onConflictDoNothing().run();
  const groups = byCode(tx.select().from(causeGroups).all());
  for (const t of CAUSE_TAGS) {
    tx.insert(causeTags).values({ code: t.code, name: t.name, groupId: groups[t.group]! }).onConflictDoNothing().run();
  }
  return caster;
}

/**
 * Seeds the invented demo plant. Safe to run again: users, reference rows and production are each
 * created only when missing, so a second run duplicates nothing.
 */
export async function seedDemo(
  db: Db,
  auth: Auth,
  opts: {
    password: string;
    scale?: number;
    uploadDir?: string;
    /** false: users and reference data only */
    production?: boolean;
    /** When the demo's last shift ends (default: now), so two seeds can be compared. */
    now?: number;
  },
): Promise<SeedResult> {
  const started = performance.now();
  let usersCreated = 0;
  for (const u of DEMO_USERS) {
    if (db.select({ id: user.id }).from(user).where(eq(user.email, u.email)).get()) continue;
    await createUser(db, auth, { name: u.name, email: u.email, roles: [...u.roles], password: opts.password }, { actor: "seed" });
    usersCreated++;
  }
  const userId = (email: string) => db.select({ id: user.id }).from(user).where(eq(user.email, email)).get()!.id;

  const production = db.transaction((tx) => {
    const caster = seedReference(tx);
    const existing = tx
      .select({ n: sql<number>`count(*)` })
      .from(heats)
      .where(eq(heats.casterId, caster.id))
      .get()!.n;
    if (existing > 0 || opts.production === false) return null;
    const strandRows = tx.select().from(strands).where(eq(strands.casterId, caster.id)).all();
    const counts = generateProduction(
      db.$client,
      {
        casterId: caster.id,
        strandIds: Object.fromEntries(strandRows.map((s) => [s.strandNo, s.id])),
        gradeIds: byCode(tx.select().from(grades).all()),
        defectTypeIds: byCode(tx.select().from(defectTypes).all()),
        causeTagIds: byCode(tx.select().from(causeTags).all()),
        users: {
          inspector: userId("inspector@demo.test"),
          quality: userId("quality@demo.test"),
          process: userId("process@demo.test"),
          claims: userId("claims@demo.test"),
          admin: userId("admin@demo.test"),
        },
      },
      opts.scale ?? 1,
    );
    // The shifts cast up to now, after the history: a fresh demo has slabs waiting in the yard.
    const lastShifts = generateLastShifts(
      db.$client,
      {
        casterId: caster.id,
        strandIds: Object.fromEntries(strandRows.map((s) => [s.strandNo, s.id])),
        gradeIds: byCode(tx.select().from(grades).all()),
        defectTypeIds: byCode(tx.select().from(defectTypes).all()),
        inspector: userId("inspector@demo.test"),
      },
      opts.now ?? Date.now(),
    );
    // Each slab's conditions come from its samples, as for any imported plant.
    createResolver(db).resolveAll();
    recordAudit(tx, { actor: "seed", action: "seed.demo", entity: "plant", entityId: DEMO_CASTER.code, after: { ...counts, lastShifts } });
    return { ...counts, lastShifts };
  });

  // The demo's risk models, trained on its history; the one that beats its baseline is switched on,
  // so the yard's "check first" list and the models screen have something to show.
  if (production) {
    const q = db.select({ id: user.id, name: user.name }).from(user).where(eq(user.email, "quality@demo.test")).get()!;
    production.riskModels = seedRiskModels(db, q, opts.now ?? Date.now());
    // Three invented operating window rules of the process engineer (one the history bears out, one it does not).
    seedOperatingWindows(db, userId("process@demo.test"));
  }
  // Demo photos for the newest unreviewed entries (only with a photo store, and only with new production).
  if (production && opts.uploadDir) production.photos = await addDemoPhotos(db, opts.uploadDir);
  return { usersCreated, production, seconds: (performance.now() - started) / 1000 };
}
