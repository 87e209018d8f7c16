/**
 * The level names of categorical terms the product makes itself ("1st heat", "transition",
 * "CC1 strand 2") in the language shown, from the catalogue `common`, under `terms.levels`; plant data
 * (a grade, a grade family, a caster code) as the server sends it. The server keeps the English level
 * as the key (sorting, the reference level, stored models): translate only where a level is shown.
 */
import { useCallback } from "react";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { levelSaid } from "@shared/i18n/levels";
import { i18n } from "./index";

const levelOf = (t: TFunction, level: string): string =>
  levelSaid(level, (key, values) => t(`common:terms.${key}`, { ...values, defaultValue: "" }) || undefined);

/** A level's name in the language shown; components using it are drawn again when the language changes. */
export function useLevelName(): (level: string) => string {
  const { t } = useTranslation("common");
  return useCallback((level: string) => levelOf(t, level), [t]);
}

/** The same outside a component (a chart option, a column list built in a function). */
export const levelName = (level: string): string => levelOf(i18n.t.bind(i18n) as TFunction, level);
