import { useTranslation } from "react-i18next";
import type { z } from "zod";
import type { embrCalibrationSchema } from "@shared/api/plant";
import { Button } from "@/components/ui/button";
import { inputNumber, localeOf, num, parseDecimal } from "@/lib/format";

export type EmbrCalibration = z.infer<typeof embrCalibrationSchema>;

const cell = "min-h-11 w-full rounded-md border border-ink-300 bg-white px-2 tabular-nums";
const toNum = (s: string) => parseDecimal(s);

/**
 * The brake's coil current → field map: a straight line (slope and offset) or a measured table of
 * A → T points, for a brake that saturates. The slope is entered in mT per A and stored in T per A.
 */
export function CalibrationEditor({
  value,
  onChange,
  idPrefix,
  error,
}: {
  value: EmbrCalibration;
  onChange: (v: EmbrCalibration) => void;
  idPrefix: string;
  error?: string;
}) {
  const { t, i18n } = useTranslation("admin");
  // A stored number in the language's style ("0,75"). An input keeps the text it was first given
  // (key={locale}): a new language draws it anew, from the number.
  const locale = localeOf(i18n.language);
  const shown = (x: number) => inputNumber(x, locale);
  const setKind = (kind: EmbrCalibration["kind"]) => {
    if (kind === value.kind) return;
    if (kind === "linear") {
      // Start from the line through the first and last point of the table.
      const pts = value.kind === "table" ? value.points : [];
      const [a0, t0] = pts[0] ?? [0, 0];
      const [a1, t1] = pts[pts.length - 1] ?? [1, 0];
      const slope = a1 !== a0 ? (t1 - t0) / (a1 - a0) : 0;
      onChange({ kind: "linear", teslaPerAmp: Number(slope.toFixed(7)), offsetT: Number((t0 - slope * a0).toFixed(4)) });
    } else {
      const l = value.kind === "linear" ? value : { teslaPerAmp: 0.00075, offsetT: 0 };
      onChange({ kind: "table", points: [0, 200, 400, 600].map((a) => [a, Number((l.offsetT + l.teslaPerAmp * a).toFixed(3))] as [number, number]) });
    }
  };

  return (
    <fieldset className="space-y-3 rounded-md border border-ink-200 p-3">
      <legend className="px-1 text-sm font-semibold text-ink-800">{t("plant.calibration.legend")}</legend>
      <div role="radiogroup" aria-label={t("plant.calibration.kind")} className="flex flex-wrap gap-2">
        {(["linear", "table"] as const).map((k) => (
          <label
            key={k}
            className={`flex min-h-11 cursor-pointer items-center gap-2 rounded-md border px-3 text-sm ${value.kind === k ? "border-strand-700 bg-strand-50 font-semibold" : "border-ink-300"}`}
          >
            <input type="radio" name={`${idPrefix}-cal-kind`} checked={value.kind === k} onChange={() => setKind(k)} className="h-4 w-4 accent-strand-700" />
            {k === "linear" ? t("plant.calibration.linear") : t("plant.calibration.table")}
          </label>
        ))}
      </div>
      {value.kind === "linear" ? (
        <div className="grid gap-3 sm:grid-cols-2">
          <label className="flex flex-col gap-1 text-sm">
            <span className="font-semibold text-ink-800">{t("plant.calibration.slope")}</span>
            <input
              key={locale}
              className={cell}
              inputMode="decimal"
              defaultValue={shown(Number((value.teslaPerAmp * 1000).toPrecision(6)))}
              onChange={(e) => onChange({ ...value, teslaPerAmp: toNum(e.target.value) / 1000 })}
            />
          </label>
          <label className="flex flex-col gap-1 text-sm">
            <span className="font-semibold text-ink-800">{t("plant.calibration.offset")}</span>
            <input
              key={locale}
              className={cell}
              inputMode="decimal"
              defaultValue={shown(value.offsetT)}
              onChange={(e) => onChange({ ...value, offsetT: toNum(e.target.value) })}
            />
          </label>
          <p className="text-xs text-ink-600 sm:col-span-2">{t("plant.calibration.fieldAt400", { field: num(value.offsetT + value.teslaPerAmp * 400, 3) })}</p>
        </div>
      ) : (
        <div className="space-y-2">
          <table className="w-full max-w-md text-sm">
            <thead>
              <tr className="text-left text-xs uppercase tracking-wide text-ink-600">
                <th className="py-1 pr-2">{t("plant.calibration.current")}</th>
                <th className="py-1 pr-2">{t("plant.calibration.field")}</th>
                <th className="py-1" />
              </tr>
            </thead>
            <tbody>
              {value.points.map(([a, tesla], i) => (
                <tr key={`${i}-${value.points.length}`}>
                  <td className="py-1 pr-2">
                    <input
                      key={locale}
                      aria-label={t("plant.calibration.currentOf", { n: i + 1 })}
                      className={cell}
                      inputMode="decimal"
                      defaultValue={shown(a)}
                      onChange={(e) => onChange({ kind: "table", points: value.points.map((p, j) => (j === i ? [toNum(e.target.value), p[1]] : p)) })}
                    />
                  </td>
                  <td className="py-1 pr-2">
                    <input
                      key={locale}
                      aria-label={t("plant.calibration.fieldOf", { n: i + 1 })}
                      className={cell}
                      inputMode="decimal"
                      defaultValue={shown(tesla)}
                      onChange={(e) => onChange({ kind: "table", points: value.points.map((p, j) => (j === i ? [p[0], toNum(e.target.value)] : p)) })}
                    />
                  </td>
                  <td className="py-1">
                    <Button
                      variant="ghost"
                      disabled={value.points.length <= 2}
                      onClick={() => onChange({ kind: "table", points: value.points.filter((_, j) => j !== i) })}
                      aria-label={t("plant.calibration.removePoint", { n: i + 1 })}
                    >
                      {t("plant.calibration.remove")}
                    </Button>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
          <Button
            variant="secondary"
            disabled={value.points.length >= 50}
            onClick={() => {
              const last = value.points[value.points.length - 1] ?? [0, 0];
              onChange({ kind: "table", points: [...value.points, [last[0] + 100, last[1]]] });
            }}
          >
            {t("plant.calibration.addPoint")}
          </Button>
          <p className="text-xs text-ink-600">{t("plant.calibration.tableHint")}</p>
        </div>
      )}
      {error ? (
        <p role="alert" className="text-sm font-medium text-alarm-700">
          {error}
        </p>
      ) : null}
    </fieldset>
  );
}
