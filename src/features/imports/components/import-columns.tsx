import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { IMPORT_COLUMNS, type ColumnSpec, type ImportKind } from "@shared/api/imports";
import { plainNumber } from "@/features/users/components/form-messages";
import { count } from "@/lib/format";

function range(c: ColumnSpec): string {
  const u = c.unit ? ` ${c.unit}` : "";
  if (c.min !== undefined && c.max !== undefined) return `${count(c.min)} – ${count(c.max)}${u}`;
  if (c.min !== undefined) return `≥ ${plainNumber(c.min)}${u}`;
  if (c.max !== undefined) return `≤ ${plainNumber(c.max)}${u}`;
  return c.unit ?? "";
}

/**
 * The chemistry columns share one line: same type, unit and bounds, one per element. A column's
 * description in the language shown (its English from the shared list while a catalogue lacks it).
 */
type Row = { keys: string[]; spec: ColumnSpec; description: string };
function rows(kind: ImportKind, t: TFunction): Row[] {
  const out: Row[] = [];
  for (const c of IMPORT_COLUMNS[kind]) {
    const last = out[out.length - 1];
    const chem = c.key.endsWith("_pct");
    if (chem && last && last.keys[0]!.endsWith("_pct") && last.spec.min === c.min && last.spec.max === c.max && last.spec.required === c.required) {
      last.keys.push(c.key);
      continue;
    }
    out.push({
      keys: [c.key],
      spec: c,
      description: chem ? t("imports.columns.chemistry") : t(`imports.columns.descriptions.${kind}.${c.key}`, { defaultValue: c.description }),
    });
  }
  return out;
}

/** The columns of a file kind, from the same list the server validates with. */
export function ImportColumns({ kind }: { kind: ImportKind }) {
  const { t } = useTranslation("admin");
  return (
    <ul className="divide-y divide-ink-100 text-sm" data-testid="import-columns">
      {rows(kind, t).map((r) => (
        <li key={r.keys[0]} className="py-2">
          <div className="flex flex-wrap items-baseline gap-x-2 gap-y-1">
            {r.keys.map((k) => (
              <code key={k} className="rounded bg-ink-50 px-1 font-mono text-[13px] font-semibold">
                {k}
              </code>
            ))}
            {r.spec.required ? <span className="text-xs font-semibold text-ember-700">{t("imports.columns.required")}</span> : null}
            <span className="text-xs text-ink-600">
              {t(`imports.columns.types.${r.spec.type}`)}
              {range(r.spec) ? `, ${range(r.spec)}` : ""}
              {r.keys.length > 1 ? t("imports.columns.each") : ""}
            </span>
          </div>
          <p className="mt-0.5 text-xs text-ink-700">{r.description}</p>
        </li>
      ))}
    </ul>
  );
}
