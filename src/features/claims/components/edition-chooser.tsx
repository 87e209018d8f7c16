import { useTranslation } from "react-i18next";
import { CUSTOMER_DEFAULT_SECTIONS, CUSTOMER_SECTIONS, HISTORY_EDITIONS, type CustomerSection, type HistoryEdition } from "@shared/api/claims";
import { useTerms } from "@/i18n/terms";

export type EditionValue = { edition: HistoryEdition; sections: CustomerSection[] };
export const CUSTOMER_DEFAULT: EditionValue = { edition: "customer", sections: CUSTOMER_DEFAULT_SECTIONS };

/** Off by default in the customer edition: say why someone might still add them (editionChooser.sectionHints.<section>). */
const SECTION_HINTS: readonly CustomerSection[] = ["causes", "investigations", "audit"];

/**
 * Which edition of a heat's history, and for the customer's, which parts. Customer first: from a
 * claim, that is what leaves the plant unless the officer chooses otherwise.
 */
export function EditionChooser({ value, onChange, name }: { value: EditionValue; onChange: (v: EditionValue) => void; name: string }) {
  const { t } = useTranslation("claims");
  const { term } = useTerms();
  return (
    <div className="space-y-3" data-testid="edition-chooser">
      <fieldset>
        <legend className="mb-1 text-sm font-semibold text-ink-800">{t("editionChooser.edition")}</legend>
        <div className="grid gap-2 sm:grid-cols-2">
          {[...HISTORY_EDITIONS].reverse().map((e) => (
            <label
              key={e}
              className={`flex min-h-12 cursor-pointer items-start gap-2 rounded-md border-2 px-3 py-2 text-sm ${value.edition === e ? "border-strand-700 bg-strand-50" : "border-ink-200 bg-white"}`}
            >
              <input
                type="radio"
                name={`${name}-edition`}
                value={e}
                className="mt-0.5 h-4 w-4"
                checked={value.edition === e}
                onChange={() => onChange({ ...value, edition: e })}
              />
              <span>
                <span className="font-semibold">{term("historyEditions", e)}</span>
                <span className="block text-xs text-ink-600">{t(`editionChooser.editionHints.${e}`)}</span>
              </span>
            </label>
          ))}
        </div>
      </fieldset>
      {value.edition === "customer" ? (
        <fieldset>
          <legend className="mb-1 text-sm font-semibold text-ink-800">{t("editionChooser.parts")}</legend>
          <div className="flex flex-wrap gap-2">
            {CUSTOMER_SECTIONS.map((x) => (
              <label key={x} className="flex min-h-11 cursor-pointer items-center gap-2 rounded-md border border-ink-300 bg-white px-3 text-sm">
                <input
                  type="checkbox"
                  name={`${name}-sections`}
                  value={x}
                  className="h-4 w-4"
                  checked={value.sections.includes(x)}
                  // Kept in the catalogue's order whatever the order of clicks.
                  onChange={(ev) =>
                    onChange({ ...value, sections: CUSTOMER_SECTIONS.filter((c) => (c === x ? ev.target.checked : value.sections.includes(c))) })
                  }
                />
                <span>
                  {term("historySections", x)}
                  {SECTION_HINTS.includes(x) ? <span className="block text-xs text-ink-600">{t(`editionChooser.sectionHints.${x}`)}</span> : null}
                </span>
              </label>
            ))}
          </div>
        </fieldset>
      ) : null}
    </div>
  );
}
