import { eq, inArray } from "drizzle-orm";
import type { PlantSettings } from "@shared/api/heats";
import type { Db } from "../db/client";
import { plantSettings } from "../db/schema";
import { WON_THOMAS_2001 } from "../metallurgy/liquidus";
import { LIQUID_STEEL } from "../metallurgy/embr";

/** Defaults when a plant has set nothing (DOMAIN.md §4). */
export const DEFAULT_SETTINGS: PlantSettings = {
  liquidus: { ...WON_THOMAS_2001, source: "Won & Thomas 2001, Metall. Mater. Trans. A 32A:1755, Table I" },
  // K ≈ 20 mm/√min in the mold (Britannica, casting of steel); 25–30 along slab strands (recalled).
  shellK: { moldMmPerSqrtMin: 20, strandMmPerSqrtMin: 27 },
  density: { solidTPerM3: 7.8, liquidTPerM3: 7.0 },
  steelProperties: { ...LIQUID_STEEL },
};

const KEYS = {
  liquidus: "metallurgy.liquidus",
  shellK: "metallurgy.shellK",
  density: "metallurgy.density",
  steelProperties: "metallurgy.steelProperties",
} as const satisfies Record<keyof PlantSettings, string>;

type Reader = Pick<Db, "select">;

export function getPlantSettings(db: Reader): PlantSettings {
  const rows = db
    .select()
    .from(plantSettings)
    .where(inArray(plantSettings.key, Object.values(KEYS)))
    .all();
  const byKey = new Map(rows.map((r) => [r.key, r.value]));
  return {
    liquidus: { ...DEFAULT_SETTINGS.liquidus, ...(byKey.get(KEYS.liquidus) as object) },
    shellK: { ...DEFAULT_SETTINGS.shellK, ...(byKey.get(KEYS.shellK) as object) },
    density: { ...DEFAULT_SETTINGS.density, ...(byKey.get(KEYS.density) as object) },
    steelProperties: { ...DEFAULT_SETTINGS.steelProperties, ...(byKey.get(KEYS.steelProperties) as object) },
  };
}

export function writePlantSettings(tx: Pick<Db, "insert" | "update" | "select">, next: PlantSettings, userId: string | null) {
  for (const [field, key] of Object.entries(KEYS) as [keyof PlantSettings, string][]) {
    const exists = tx.select({ key: plantSettings.key }).from(plantSettings).where(eq(plantSettings.key, key)).get();
    if (exists) {
      tx.update(plantSettings).set({ value: next[field], updatedAt: new Date(), updatedBy: userId }).where(eq(plantSettings.key, key)).run();
    } else {
      tx.insert(plantSettings).values({ key, value: next[field], updatedBy: userId }).run();
    }
  }
}
