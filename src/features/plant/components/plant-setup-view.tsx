import { useQuery } from "@tanstack/react-query";
import type { PlantSetup } from "@shared/api/plant";
import { Card } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { plantKeys } from "../api/plant.queries";

function calibrationText(c: PlantSetup["casters"][number]["strands"][number]["embrCalibration"]) {
  if (c.kind === "linear") return `linear: ${(c.teslaPerAmp * 1000).toFixed(3)} mT per A${c.offsetT ? `, offset ${c.offsetT} T` : ""}`;
  return `table: ${c.points.map(([a, t]) => `${a} A → ${t} T`).join(", ")}`;
}

/** Casters, strands and their settings, and the grades by family (read-only here). */
export function PlantSetupView() {
  const setup = useQuery(plantKeys.setup());
  if (setup.isPending) return <Spinner />;
  if (setup.isError) return <Notice tone="error">{setup.error.message}</Notice>;
  return (
    <div className="grid gap-5 lg:grid-cols-2">
      {setup.data.casters.map((c) => (
        <Card key={c.id} title={`${c.code} — ${c.name}`}>
          <p className="mb-3 text-sm text-ink-600">
            {c.worksName} · {c.machineType}
            {c.radiusM ? `, radius ${c.radiusM} m` : ""}
          </p>
          <div className="overflow-x-auto">
            <table className="w-full text-sm">
              <thead>
                <tr className="border-b border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
                  <th className="py-2 pr-3">Strand</th>
                  <th className="py-2 pr-3">Mold thickness (mm)</th>
                  <th className="py-2 pr-3">Effective mold length (mm)</th>
                  <th className="py-2 pr-3">SEN port area (mm²)</th>
                  <th className="py-2">EMBr calibration</th>
                </tr>
              </thead>
              <tbody>
                {c.strands.map((s) => (
                  <tr key={s.id} className="border-b border-ink-100 align-top">
                    <td className="py-2 pr-3 font-semibold">{s.strandNo}</td>
                    <td className="py-2 pr-3 tabular-nums">{s.moldThicknessMm}</td>
                    <td className="py-2 pr-3 tabular-nums">{s.moldEffectiveLengthMm}</td>
                    <td className="py-2 pr-3 tabular-nums">
                      {s.senPortAreaMm2} × {s.senPortCount}
                    </td>
                    <td className="py-2 text-xs">{calibrationText(s.embrCalibration)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </Card>
      ))}
      <Card title="Grades by family">
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
                    title={g.active ? g.name : `${g.name} (retired)`}
                  >
                    {g.code}
                    {g.active ? "" : " · retired"}
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
