/**
 * The words of the trade and of the product's shared lists in the language shown: the variables
 * (shared/variables.ts), faces, severities, stages, dispositions, statuses… Their English is in the
 * shared label maps the server also reads; the catalogue `common`, under `terms`, holds them in every
 * language. A key the catalogue lacks (a variable added later) shows the English label, never a key.
 */
import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { VARIABLES } from "@shared/variables";
import { i18n } from "./index";

export type TermList =
  | "categorical"
  | "conditionSources"
  | "faces"
  | "severities"
  | "stages"
  | "dispositions"
  | "causeConfidence"
  | "claimStatus"
  | "historySections"
  | "historyEditions"
  | "investigationStatus"
  | "actionStatus"
  | "hypothesisStatus"
  | "riskCategories"
  | "riskBands"
  | "tokenScopes";

const LABEL = new Map(VARIABLES.map((v) => [v.key, v]));

export interface Terms {
  /** A shared list's label: term("faces", "inner") → "Inner radius (top) face" / "Innenbogenseite (oben)". */
  term: (list: TermList, key: string | number) => string;
  /** A variable's label ("Casting speed"); a categorical key ("grade_family") too. */
  variable: (key: string) => string;
  /** A variable's one-line description. */
  variableDescription: (key: string) => string;
}

function termsOf(t: TFunction): Terms {
  return {
    term: (list, key) => t(`common:terms.${list}.${key}`, { defaultValue: String(key) }),
    variable: (key) => {
      const spec = LABEL.get(key);
      if (spec) return t(`common:terms.variables.${key}.label`, { defaultValue: spec.label });
      return t(`common:terms.categorical.${key}`, { defaultValue: key });
    },
    variableDescription: (key) => t(`common:terms.variables.${key}.description`, { defaultValue: LABEL.get(key)?.description ?? "" }),
  };
}

/** The terms in the language shown; components using it are drawn again when the language changes. */
export function useTerms(): Terms {
  const { t } = useTranslation("common");
  return useMemo(() => termsOf(t), [t]);
}

/** The same outside a component (a column list built once per draw, a chart option). */
export const terms = (): Terms => termsOf(i18n.t.bind(i18n) as TFunction);
