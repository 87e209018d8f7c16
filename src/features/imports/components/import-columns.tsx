import { IMPORT_COLUMNS, type ColumnSpec, type ImportKind } from "@shared/api/imports";

const TYPE_LABELS: Record<ColumnSpec["type"], string> = {
  text: "text",
  number: "number",
  integer: "whole number",
  datetime: "date and time",
  boolean: "true / false",
};

function range(c: ColumnSpec): string {
  const u = c.unit ? ` ${c.unit}` : "";
  if (c.min !== undefined && c.max !== undefined) return `${c.min.toLocaleString("en-GB")} – ${c.max.toLocaleString("en-GB")}${u}`;
  if (c.min !== undefined) return `≥ ${c.min}${u}`;
  if (c.max !== undefined) return `≤ ${c.max}${u}`;
  return c.unit ?? "";
}

/** The chemistry columns share one line: same type, unit and bounds, one per element. */
type Row = { keys: string[]; spec: ColumnSpec; description: string };
function rows(kind: ImportKind): Row[] {
  const out: Row[] = [];
  for (const c of IMPORT_COLUMNS[kind]) {
    const last = out[out.length - 1];
    const chem = c.key.endsWith("_pct");
    if (chem && last && last.keys[0]!.endsWith("_pct") && last.spec.min === c.min && last.spec.max === c.max && last.spec.required === c.required) {
      last.keys.push(c.key);
      continue;
    }
    out.push({ keys: [c.key], spec: c, description: chem ? "Content of the element in the heat (ladle or tundish analysis)." : c.description });
  }
  return out;
}

/** The columns of a file kind, from the same list the server validates with. */
export function ImportColumns({ kind }: { kind: ImportKind }) {
  return (
    <ul className="divide-y divide-ink-100 text-sm" data-testid="import-columns">
      {rows(kind).map((r) => (
        <li key={r.keys[0]} className="py-2">
          <div className="flex flex-wrap items-baseline gap-x-2 gap-y-1">
            {r.keys.map((k) => (
              <code key={k} className="rounded bg-ink-50 px-1 font-mono text-[13px] font-semibold">
                {k}
              </code>
            ))}
            {r.spec.required ? <span className="text-xs font-semibold text-ember-700">* required</span> : null}
            <span className="text-xs text-ink-600">
              {TYPE_LABELS[r.spec.type]}
              {range(r.spec) ? `, ${range(r.spec)}` : ""}
              {r.keys.length > 1 ? " each" : ""}
            </span>
          </div>
          <p className="mt-0.5 text-xs text-ink-700">{r.description}</p>
        </li>
      ))}
    </ul>
  );
}
