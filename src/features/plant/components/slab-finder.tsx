import { useEffect, useRef, useState } from "react";
import { useQuery, useQueryClient } from "@tanstack/react-query";
import type { SlabHit } from "@shared/api/plant";
import { plantKeys } from "../api/plant.queries";

function useDebounced<T>(value: T, ms: number): T {
  const [v, setV] = useState(value);
  useEffect(() => {
    const t = setTimeout(() => setV(value), ms);
    return () => clearTimeout(t);
  }, [value, ms]);
  return v;
}

/**
 * Finds a slab by the start of its id (or its heat number). A barcode scanner types the id and
 * presses Enter: Enter picks the exact match, or the only match.
 */
export function SlabFinder({ onPick, autoFocus = true }: { onPick: (slab: SlabHit) => void; autoFocus?: boolean }) {
  const [text, setText] = useState("");
  const [notice, setNotice] = useState<string | null>(null);
  const q = useDebounced(text.trim(), 150);
  const qc = useQueryClient();
  const search = useQuery(plantKeys.slabSearch(q));
  const inputRef = useRef<HTMLInputElement>(null);
  const hits = q ? (search.data?.slabs ?? []) : [];

  const pick = (slab: SlabHit) => {
    setNotice(null);
    setText("");
    onPick(slab);
  };

  const onEnter = async () => {
    const typed = text.trim().toUpperCase();
    if (!typed) return;
    // Scanners are faster than the debounce: ask for the typed id itself.
    const result = await qc.fetchQuery(plantKeys.slabSearch(typed));
    const exact = result.slabs.find((s) => s.slabId === typed);
    if (exact) return pick(exact);
    if (result.slabs.length === 1) return pick(result.slabs[0]!);
    setNotice(result.slabs.length === 0 ? `No slab with an id starting "${typed}".` : "Several slabs match: tap the one you mean.");
  };

  return (
    <div className="space-y-3">
      <label htmlFor="slab-finder" className="block text-sm font-semibold text-ink-800">
        Slab id or heat number — type or scan
      </label>
      <input
        id="slab-finder"
        ref={inputRef}
        value={text}
        autoFocus={autoFocus}
        autoComplete="off"
        autoCapitalize="characters"
        spellCheck={false}
        inputMode="text"
        enterKeyHint="search"
        placeholder="e.g. L261204-103"
        onChange={(e) => {
          setText(e.target.value);
          setNotice(null);
        }}
        onKeyDown={(e) => {
          if (e.key === "Enter") {
            e.preventDefault();
            void onEnter();
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
        <ul className="divide-y divide-ink-100 overflow-hidden rounded-lg border border-ink-200 bg-white" aria-label="Matching slabs">
          {hits.map((s) => (
            <li key={s.slabId}>
              <button
                type="button"
                onClick={() => pick(s)}
                className="flex min-h-14 w-full items-center justify-between gap-4 px-4 text-left hover:bg-strand-50"
              >
                <span className="text-lg font-semibold tabular-nums">{s.slabId}</span>
                <span className="text-sm text-ink-600">
                  heat {s.heatNo} · strand {s.strandNo} · {s.gradeCode}
                  {s.defectCount > 0 ? ` · ${s.defectCount} defect${s.defectCount > 1 ? "s" : ""}` : ""}
                </span>
              </button>
            </li>
          ))}
        </ul>
      ) : q && search.isSuccess ? (
        <p className="text-sm text-ink-600">No slab matches “{q.toUpperCase()}”.</p>
      ) : null}
    </div>
  );
}
