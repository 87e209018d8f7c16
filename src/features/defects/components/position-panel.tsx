import { useEffect, useState } from "react";
import { Trans, useTranslation } from "react-i18next";
import type { Face } from "@shared/domain";
import { num, parseDecimal } from "@/lib/format";

export interface PositionValue {
  face: Face;
  alongMm: number;
  acrossMm: number;
}

export interface SlabLimits {
  lengthMm: number;
  widthMm: number;
  thicknessMm: number;
}

export const acrossLimit = (slab: SlabLimits, face: Face) => (face === "left" || face === "right" ? slab.thicknessMm : slab.widthMm);

/** Where across is measured from: the key of its words under `position` (the readout, the stepper's label). */
export const acrossFrom = (face: Face) => (face === "left" || face === "right" ? "fromCorner" : "fromEdge");

/** The faces to choose, in the order of the buttons; their short names are under `position.faceShort`. */
const FACE_CHOICES: Face[] = ["inner", "outer", "left", "right", "section"];

const parseMm = (s: string): number | null => {
  if (!s.trim()) return null;
  const n = parseDecimal(s);
  return Number.isFinite(n) ? n : null;
};

/** A millimetre value with big − and + steps either side and the number typed in between. */
function MmStepper({
  label,
  value,
  max,
  steps,
  onChange,
  testId,
}: {
  label: string;
  value: number;
  max: number;
  steps: [number, number];
  onChange: (v: number) => void;
  testId: string;
}) {
  const { t } = useTranslation("yard");
  const [text, setText] = useState(String(value));
  useEffect(() => setText(String(value)), [value]);
  const set = (v: number) => onChange(Math.min(max, Math.max(0, Math.round(v))));
  const btn =
    "min-h-14 min-w-14 rounded-lg border-2 border-ink-300 bg-white px-2 text-base font-bold tabular-nums text-ink-900 hover:border-ink-500 active:bg-ink-100";
  const [small, big] = steps;
  return (
    <div>
      <label htmlFor={`${testId}-input`} className="mb-1 block text-sm font-semibold text-ink-800">
        {label}
      </label>
      <div className="flex items-stretch gap-1.5">
        <button type="button" className={btn} onClick={() => set(value - big)} aria-label={t("position.minus", { label, mm: big })}>
          −{big}
        </button>
        <button type="button" className={btn} onClick={() => set(value - small)} aria-label={t("position.minus", { label, mm: small })}>
          −{small}
        </button>
        <div className="relative min-w-0 flex-1">
          <input
            id={`${testId}-input`}
            data-testid={testId}
            inputMode="numeric"
            value={text}
            onChange={(e) => setText(e.target.value)}
            onBlur={() => {
              const n = parseMm(text);
              if (n === null) setText(String(value));
              else set(n);
            }}
            onKeyDown={(e) => {
              if (e.key === "Enter") {
                e.preventDefault();
                (e.target as HTMLInputElement).blur();
              }
            }}
            className="h-full min-h-14 w-full rounded-lg border-2 border-ink-300 bg-white pl-3 pr-10 text-right text-xl font-bold tabular-nums text-ink-950 focus:border-strand-600"
          />
          <span className="pointer-events-none absolute inset-y-0 right-3 flex items-center text-sm text-ink-600">mm</span>
        </div>
        <button type="button" className={btn} onClick={() => set(value + small)} aria-label={t("position.plus", { label, mm: small })}>
          +{small}
        </button>
        <button type="button" className={btn} onClick={() => set(value + big)} aria-label={t("position.plus", { label, mm: big })}>
          +{big}
        </button>
      </div>
      <p className="mt-0.5 text-xs text-ink-600">0 – {num(max)} mm</p>
    </div>
  );
}

/** The placed position in words and numbers, with the face to switch and both distances to fine-tune. */
export function PositionPanel({
  slab,
  value,
  onChange,
  error,
}: {
  slab: SlabLimits;
  value: PositionValue | null;
  onChange: (v: PositionValue) => void;
  error?: string;
}) {
  const { t } = useTranslation("yard");
  const pick = (face: Face) => {
    const base = value ?? { face, alongMm: 0, acrossMm: 0 };
    const limit = acrossLimit(slab, face);
    // Moving between a broad and a narrow face: keep the share of the way across.
    const share = value ? base.acrossMm / acrossLimit(slab, value.face) : 0.5;
    onChange({ face, alongMm: base.alongMm, acrossMm: Math.round(Math.min(1, share) * limit) });
  };
  return (
    <div className="space-y-3">
      <div>
        <div className="mb-1 text-sm font-semibold text-ink-800">{t("position.face")}</div>
        <div role="radiogroup" aria-label={t("position.face")} className="grid grid-cols-2 gap-2 sm:grid-cols-5">
          {FACE_CHOICES.map((face) => {
            const on = value?.face === face;
            return (
              <button
                key={face}
                type="button"
                role="radio"
                aria-checked={on}
                onClick={() => pick(face)}
                className={`min-h-14 rounded-lg border-2 px-2 text-base font-semibold ${
                  on ? "border-strand-700 bg-strand-50 text-ink-950 shadow-[inset_0_0_0_1px_var(--color-strand-700)]" : "border-ink-300 bg-white text-ink-800"
                }`}
              >
                {on ? <span aria-hidden>✓ </span> : null}
                {t(`position.faceShort.${face}`)}
              </button>
            );
          })}
        </div>
      </div>
      {value ? (
        <>
          <p className="rounded-md bg-ink-900 px-3 py-2 text-base font-semibold text-white" data-testid="position-readout" aria-live="polite">
            <Trans
              t={t}
              i18nKey="position.readout"
              values={{
                face: t(`position.faceReadout.${value.face}`),
                along: num(value.alongMm),
                across: num(value.acrossMm),
                from: t(`position.${acrossFrom(value.face)}`),
              }}
              components={{ 1: <span data-testid="readout-along" />, 2: <span data-testid="readout-across" /> }}
            />
          </p>
          <div className="grid gap-3 md:grid-cols-2">
            <MmStepper
              label={value.face === "section" ? t("position.sectionAt") : t("position.along")}
              value={value.alongMm}
              max={slab.lengthMm}
              steps={[10, 100]}
              onChange={(alongMm) => onChange({ ...value, alongMm })}
              testId="along-mm"
            />
            <MmStepper
              label={t(`position.across.${acrossFrom(value.face)}`)}
              value={value.acrossMm}
              max={acrossLimit(slab, value.face)}
              steps={value.face === "left" || value.face === "right" ? [5, 20] : [10, 100]}
              onChange={(acrossMm) => onChange({ ...value, acrossMm })}
              testId="across-mm"
            />
          </div>
        </>
      ) : (
        <p className="text-base text-ink-700" data-testid="position-readout">
          {t("position.tapOrType")}
        </p>
      )}
      {error ? (
        <p role="alert" className="text-sm font-medium text-alarm-700">
          {error}
        </p>
      ) : null}
    </div>
  );
}
