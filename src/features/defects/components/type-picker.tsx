import { useMemo, useState } from "react";
import { Trans, useTranslation } from "react-i18next";
import type { DefectType } from "@shared/api/defects";

const RECENT_COUNT = 6;

/** Recently used by this user first (newest first), then the catalogue's order. */
export function orderTypes(types: DefectType[]): { recent: DefectType[]; rest: DefectType[] } {
  const active = types.filter((t) => t.active);
  const recent = active
    .filter((t) => t.lastUsedByMeAt)
    .sort((a, b) => (b.lastUsedByMeAt! < a.lastUsedByMeAt! ? -1 : b.lastUsedByMeAt! > a.lastUsedByMeAt! ? 1 : 0))
    .slice(0, RECENT_COUNT);
  const rest = active.filter((t) => !recent.includes(t));
  return { recent, rest };
}

function matches(t: DefectType, q: string) {
  const s = q.trim().toLowerCase();
  if (!s) return true;
  return t.code.toLowerCase().startsWith(s) || t.name.toLowerCase().includes(s) || t.categoryName.toLowerCase().includes(s);
}

function TypeTile({ t, on, onPick }: { t: DefectType; on: boolean; onPick: () => void }) {
  return (
    <button
      type="button"
      role="radio"
      aria-checked={on}
      onClick={onPick}
      className={`relative flex min-h-14 items-center gap-3 rounded-lg border-2 px-3 py-2 text-left transition-colors ${
        on ? "border-strand-700 bg-strand-50 shadow-[inset_0_0_0_1px_var(--color-strand-700)]" : "border-ink-300 bg-white hover:border-ink-500"
      }`}
    >
      <span className="min-w-12 rounded bg-ink-900 px-1.5 py-1 text-center text-xs font-bold tracking-wider text-white">{t.code}</span>
      <span className="pr-5 text-base font-semibold leading-tight text-ink-900">{t.name}</span>
      {on ? (
        <span aria-hidden className="absolute right-2 top-2 flex h-5 w-5 items-center justify-center rounded-full bg-strand-700 text-xs font-bold text-white">
          ✓
        </span>
      ) : null}
    </button>
  );
}

/** The defect type from the catalogue: searchable, the inspector's recently used types first. */
export function TypePicker({
  types,
  value,
  onChange,
  error,
  id,
}: {
  types: DefectType[];
  value: string | null;
  onChange: (code: string) => void;
  error?: string;
  id?: string;
}) {
  const { t } = useTranslation("yard");
  const [q, setQ] = useState("");
  const [showAll, setShowAll] = useState(false);
  const { recent, rest } = useMemo(() => orderTypes(types), [types]);
  const chosen = types.find((t) => t.code === value);
  const searching = q.trim().length > 0;
  const hits = searching ? [...recent, ...rest].filter((t) => matches(t, q)) : [];
  // Without recent types there is nothing to show first: the whole catalogue opens.
  const all = showAll || recent.length === 0;
  const byCategory = useMemo(() => {
    const groups = new Map<string, DefectType[]>();
    for (const t of rest) groups.set(t.categoryName, [...(groups.get(t.categoryName) ?? []), t]);
    return [...groups.entries()];
  }, [rest]);

  return (
    <div id={id} className="scroll-mt-24 space-y-3">
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <label htmlFor="type-search" className="text-base font-semibold text-ink-900">
          {t("typePicker.label")}
        </label>
        {chosen ? (
          <span className="text-sm text-ink-700" data-testid="chosen-type">
            <Trans t={t} i18nKey="typePicker.chosen" values={{ code: chosen.code, name: chosen.name }} components={{ 1: <b /> }} />
          </span>
        ) : null}
      </div>
      <input
        id="type-search"
        type="search"
        value={q}
        onChange={(e) => setQ(e.target.value)}
        placeholder={t("typePicker.placeholder")}
        autoComplete="off"
        enterKeyHint="search"
        className="min-h-14 w-full rounded-lg border-2 border-ink-300 bg-white px-4 text-lg placeholder:text-ink-400 focus:border-strand-600"
      />
      <div role="radiogroup" aria-label={t("typePicker.label")} aria-invalid={error ? true : undefined} className="space-y-3">
        {searching ? (
          hits.length ? (
            <div className="grid gap-2 sm:grid-cols-2">
              {hits.map((t) => (
                <TypeTile
                  key={t.code}
                  t={t}
                  on={t.code === value}
                  onPick={() => {
                    onChange(t.code);
                    setQ("");
                  }}
                />
              ))}
            </div>
          ) : (
            <p className="text-sm text-ink-700">{t("typePicker.noMatch", { q })}</p>
          )
        ) : (
          <>
            {recent.length ? (
              <div>
                <div className="mb-1 text-xs font-semibold uppercase tracking-wide text-ink-600">{t("typePicker.recent")}</div>
                <div className="grid gap-2 sm:grid-cols-2">
                  {recent.map((t) => (
                    <TypeTile key={t.code} t={t} on={t.code === value} onPick={() => onChange(t.code)} />
                  ))}
                </div>
              </div>
            ) : null}
            {all ? (
              byCategory.map(([category, list]) => (
                <div key={category}>
                  <div className="mb-1 text-xs font-semibold uppercase tracking-wide text-ink-600">{category}</div>
                  <div className="grid gap-2 sm:grid-cols-2">
                    {list.map((t) => (
                      <TypeTile key={t.code} t={t} on={t.code === value} onPick={() => onChange(t.code)} />
                    ))}
                  </div>
                </div>
              ))
            ) : chosen && !recent.includes(chosen) ? (
              <div className="grid gap-2 sm:grid-cols-2">
                <TypeTile t={chosen} on onPick={() => undefined} />
              </div>
            ) : null}
          </>
        )}
      </div>
      {!searching && recent.length > 0 ? (
        <button
          type="button"
          onClick={() => setShowAll((v) => !v)}
          className="min-h-12 rounded-md px-2 text-base font-semibold text-strand-700 underline decoration-strand-300 underline-offset-4"
        >
          {showAll ? t("typePicker.onlyRecent") : t("typePicker.showAll", { count: recent.length + rest.length, n: recent.length + rest.length })}
        </button>
      ) : null}
      {error ? (
        <p role="alert" className="text-sm font-medium text-alarm-700">
          {error}
        </p>
      ) : null}
    </div>
  );
}
