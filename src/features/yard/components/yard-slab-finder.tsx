import { useEffect, useState } from "react";
import { useQuery, useQueryClient } from "@tanstack/react-query";
import { Trans, useTranslation } from "react-i18next";
import type { YardSlab } from "@shared/api/yard";
import { Button } from "@/components/ui/button";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { ApiError } from "@/lib/api-client";
import { count } from "@/lib/format";
import { searchYard } from "../yard-set";
import { useOnline } from "../use-online";

function useDebounced<T>(value: T, ms: number): T {
  const [v, setV] = useState(value);
  useEffect(() => {
    const t = setTimeout(() => setV(value), ms);
    return () => clearTimeout(t);
  }, [value, ms]);
  return v;
}

interface Hit {
  slabId: string;
  heatNo: string;
  strandNo: number;
  gradeCode: string;
  defects: number;
  yard: YardSlab | null;
}

const MAX_ID = 40;

/**
 * The yard's slab finder: the slabs on this tablet answer at once, with or without a network; the
 * server adds the rest while online. A hand scanner types the id and presses Enter: Enter opens the
 * exact match, or the only one. Offline, an id the tablet does not hold can still be logged by id —
 * the server checks it when the network is back.
 */
export function YardSlabFinder({ slabs, onPick }: { slabs: readonly YardSlab[] | undefined; onPick: (slabId: string) => void }) {
  const { t } = useTranslation("yard");
  const online = useOnline();
  const [text, setText] = useState("");
  const [notice, setNotice] = useState<string | null>(null);
  const [unknownId, setUnknownId] = useState<string | null>(null);
  const q = useDebounced(text.trim().toUpperCase(), 150);
  const qc = useQueryClient();
  const server = useQuery({ ...plantKeys.slabSearch(q), enabled: online && q.length > 0 });
  const local = q ? searchYard(slabs ?? [], q) : [];
  const hits: Hit[] = local.map((s) => ({ slabId: s.slabId, heatNo: s.heatNo, strandNo: s.strandNo, gradeCode: s.gradeCode, defects: s.defects, yard: s }));
  if (online && q) {
    for (const s of server.data?.slabs ?? []) {
      if (hits.length >= 10) break;
      if (!hits.some((h) => h.slabId === s.slabId)) hits.push({ ...s, defects: s.defectCount, yard: null });
    }
  }

  const pick = (slabId: string) => {
    setNotice(null);
    setUnknownId(null);
    setText("");
    onPick(slabId);
  };

  const onEnter = async (raw: string) => {
    const typed = raw.trim().toUpperCase();
    if (!typed) return;
    const mine = searchYard(slabs ?? [], typed);
    if (mine[0]?.slabId === typed) return pick(typed);
    if (navigator.onLine !== false) {
      try {
        // Scanners are faster than the debounce: ask for the typed id itself.
        const result = await qc.fetchQuery(plantKeys.slabSearch(typed));
        const exact = result.slabs.find((s) => s.slabId === typed);
        if (exact) return pick(exact.slabId);
        if (result.slabs.length === 1) return pick(result.slabs[0]!.slabId);
        setNotice(result.slabs.length === 0 ? t("finder.noneStarting", { typed }) : t("finder.several"));
        return;
      } catch (err) {
        // The network went on the way: carry on with what the tablet holds.
        if (!(err instanceof ApiError && err.status === 0)) {
          setNotice(err instanceof Error ? err.message : String(err));
          return;
        }
      }
    }
    if (mine.length === 1) return pick(mine[0]!.slabId);
    if (mine.length > 1) return setNotice(t("finder.severalOnTablet"));
    setUnknownId(typed.length <= MAX_ID ? typed : null);
    setNotice(typed.length <= MAX_ID ? null : t("finder.tooLong", { max: MAX_ID }));
  };

  const showUnknown = unknownId ?? (!online && q && local.length === 0 && q.length >= 4 && q.length <= MAX_ID ? q : null);

  return (
    <div className="space-y-3">
      <label htmlFor="slab-finder" className="block text-sm font-semibold text-ink-800">
        {t("finder.label")}
      </label>
      <input
        id="slab-finder"
        value={text}
        // eslint-disable-next-line jsx-a11y/no-autofocus -- the yard screen's one field: a hand scanner types into whatever has focus
        autoFocus
        autoComplete="off"
        autoCapitalize="characters"
        spellCheck={false}
        inputMode="text"
        enterKeyHint="search"
        placeholder={t("finder.placeholder")}
        maxLength={60}
        onChange={(e) => {
          setText(e.target.value);
          setNotice(null);
          setUnknownId(null);
        }}
        onKeyDown={(e) => {
          if (e.key === "Enter") {
            e.preventDefault();
            // The field's own value: a scanner's Enter may come before React has re-rendered.
            void onEnter(e.currentTarget.value);
          }
        }}
        className="min-h-16 w-full rounded-lg border-2 border-ink-300 bg-white px-4 text-2xl font-semibold tracking-wide text-ink-900 placeholder:font-normal placeholder:text-ink-400 focus:border-strand-600"
      />
      {notice ? (
        <p role="status" className="text-sm font-medium text-ember-700">
          {notice}
        </p>
      ) : null}
      {hits.length > 0 ? (
        <ul className="divide-y divide-ink-100 overflow-hidden rounded-lg border border-ink-200 bg-white" aria-label={t("finder.matches")}>
          {hits.map((s) => (
            <li key={s.slabId}>
              <button
                type="button"
                onClick={() => pick(s.slabId)}
                className="flex min-h-14 w-full flex-wrap items-center justify-between gap-x-4 px-4 py-1 text-left hover:bg-strand-50"
              >
                <span className="text-lg font-semibold tabular-nums">{s.slabId}</span>
                <span className="text-sm text-ink-600">
                  {t(`finder.hit.${s.yard?.products.length ? "rolled" : s.yard?.uninspected ? "notInspected" : "plain"}${s.defects > 0 ? "WithDefects" : ""}`, {
                    heat: s.heatNo,
                    strand: s.strandNo,
                    grade: s.gradeCode,
                    count: s.defects,
                    n: count(s.defects),
                  })}
                </span>
              </button>
            </li>
          ))}
        </ul>
      ) : q && online && server.isSuccess && !notice ? (
        // (After Enter the notice above says it already.)
        <p className="text-sm text-ink-600">{t("finder.noMatch", { q })}</p>
      ) : null}
      {showUnknown ? (
        <div
          className="flex flex-wrap items-center justify-between gap-3 rounded-lg border-2 border-brass-400 bg-[#fbf3df] px-4 py-3"
          data-testid="not-on-tablet"
        >
          <p className="text-sm text-ink-900">
            <Trans t={t} i18nKey="finder.notOnTablet" values={{ slabId: showUnknown }} components={{ 1: <b /> }} />
          </p>
          <Button size="lg" onClick={() => pick(showUnknown)}>
            {t("finder.logById", { slabId: showUnknown })}
          </Button>
        </div>
      ) : null}
    </div>
  );
}
