import { useQuery } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import type { PlantSetup } from "@shared/api/plant";
import { Card } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { plainNumber } from "@/features/users/components/form-messages";
import { num } from "@/lib/format";
import { plantKeys } from "../api/plant.queries";

function calibrationText(t: TFunction, c: PlantSetup["casters"][number]["strands"][number]["embrCalibration"]) {
  if (c.kind === "linear") {
    const slope = num(c.teslaPerAmp * 1000, 3);
    return c.offsetT ? t("plant.view.linearOffset", { slope, offset: plainNumber(c.offsetT) }) : t("plant.view.linear", { slope });
  }
  return t("plant.view.table", { points: c.points.map(([a, tesla]) => `${plainNumber(a)} A → ${plainNumber(tesla)} T`).join(", ") });
}

/** Casters, strands and their settings, and the grades by family (read-only here). */
export function PlantSetupView() {
  const { t } = useTranslation("admin");
  const setup = useQuery(plantKeys.setup());
  if (setup.isPending) return <Spinner />;
  if (setup.isError) return <Notice tone="error">{setup.error.message}</Notice>;
  return (
    <div className="grid gap-5 lg:grid-cols-2">
      {setup.data.casters.map((c) => (
        <Card key={c.id} title={`${c.code} — ${c.name}`}>
          <p className="mb-3 text-sm text-ink-600">
            {c.worksName} · {t(`setup.machineTypes.${c.machineType}`, { defaultValue: c.machineType })}
            {c.radiusM ? t("setup.radius", { radius: plainNumber(c.radiusM) }) : ""}
          </p>
          <div className="overflow-x-auto">
            <table className="w-full text-sm">
              <thead>
                <tr className="border-b border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
                  <th className="py-2 pr-3">{t("plant.view.strand")}</th>
                  <th className="py-2 pr-3">{t("plant.view.moldThickness")}</th>
                  <th className="py-2 pr-3">{t("plant.view.moldLength")}</th>
                  <th className="py-2 pr-3">{t("plant.view.portArea")}</th>
                  <th className="py-2">{t("plant.view.calibration")}</th>
                </tr>
              </thead>
              <tbody>
                {c.strands.map((s) => (
                  <tr key={s.id} className="border-b border-ink-100 align-top">
                    <td className="py-2 pr-3 font-semibold">{s.strandNo}</td>
                    <td className="py-2 pr-3 tabular-nums">{plainNumber(s.moldThicknessMm)}</td>
                    <td className="py-2 pr-3 tabular-nums">{plainNumber(s.moldEffectiveLengthMm)}</td>
                    <td className="py-2 pr-3 tabular-nums">
                      {plainNumber(s.senPortAreaMm2)} × {s.senPortCount}
                    </td>
                    <td className="py-2 text-xs">{calibrationText(t, s.embrCalibration)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </Card>
      ))}
      <Card title={t("plant.view.gradesByFamily")}>
        <ul className="space-y-3 text-sm">
          {setup.data.gradeFamilies.map((f) => (
            <li key={f.id}>
              <div className="font-semibold">
                {f.code} — {f.name}
              </div>
              {f.description ? <div className="text-xs text-ink-600">{f.description}</div> : null}
              <div className="mt-1 flex flex-wrap gap-1">
                {f.grades.map((g) => (
                  <span
                    key={g.id}
                    className={`rounded border px-2 py-0.5 text-xs ${g.active ? "border-ink-200 bg-ink-50" : "border-dashed border-ink-300 text-ink-500"}`}
                    title={g.active ? g.name : t("plant.view.retiredTitle", { name: g.name })}
                  >
                    {g.code}
                    {g.active ? "" : t("plant.view.retiredMark")}
                  </span>
                ))}
              </div>
            </li>
          ))}
        </ul>
      </Card>
    </div>
  );
}
