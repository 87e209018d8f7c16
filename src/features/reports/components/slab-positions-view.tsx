import { lazy, Suspense } from "react";
import type { SlabPositions } from "@shared/api/reports";
import { Card } from "@/components/ui/card";
import { Figure } from "./figure";
import { Spinner } from "@/components/ui/logo";
import { faceLabel } from "@/lib/labels";
import { pct, plural } from "@/lib/format";
import { SmallNWarning } from "./small-n";
import { TableWrap, td, tdNum, th, thNum } from "./tables";

const SlabDensityChart = lazy(() => import("./charts/slab-density-chart"));

/** Below this many defects a position pattern is mostly noise. */
const FEW_DEFECTS = 30;

const SHORT_FACE: Record<string, string> = {
  inner: "Inner (top)",
  outer: "Outer (bottom)",
  left: "Left narrow",
  right: "Right narrow",
  section: "Cross-section",
};
const faceShort = (f: string) => SHORT_FACE[f] ?? f;

const band = (lo: number, hi: number) => `${Math.round(lo * 100)}–${Math.round(hi * 100)} %`;

export function SlabPositionsView({ data }: { data: SlabPositions }) {
  const placed = data.grid.reduce((s, g) => s + g.along.reduce((a, b) => a + b, 0), 0);
  const section = data.byFace.find((f) => f.face === "section")?.defects ?? 0;
  const along = data.alongEdges.slice(0, -1).map((e, i) => band(e, data.alongEdges[i + 1]!));
  const across = data.acrossEdges.slice(0, -1).map((e, i) => band(e, data.acrossEdges[i + 1]!));
  const surface = data.grid.filter((g) => g.face !== "section");
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4">
        <Figure
          label="Defects with a position (n)"
          value={<span data-testid="positions-n">{data.defects.toLocaleString("en-GB")}</span>}
          note={`on ${plural(data.slabs, "slab")}`}
        />
        {data.byFace
          .filter((f) => f.face === "inner" || f.face === "outer")
          .map((f) => (
            <Figure
              key={f.face}
              label={faceLabel(f.face)}
              value={f.defects.toLocaleString("en-GB")}
              note={`${pct(data.defects ? f.defects / data.defects : null, 1)} of n = ${data.defects}`}
            />
          ))}
        <Figure
          label="Narrow faces"
          value={data.byFace.filter((f) => f.face === "left" || f.face === "right").reduce((s, f) => s + f.defects, 0)}
          note={section ? `${section} more on cross-sections` : "left and right together"}
        />
      </div>
      <SmallNWarning
        notes={[
          data.defects === 0 ? "No defect with a recorded position passes these filters." : "",
          data.defects > 0 && data.defects < FEW_DEFECTS ? `Only ${plural(data.defects, "defect")} with a position: a pattern in so few is mostly chance.` : "",
        ]}
      />
      <Card title="Where the defects sit (faces unrolled, head end on the left)">
        <Suspense fallback={<Spinner label="Loading the chart" />}>
          <SlabDensityChart data={data} />
        </Suspense>
        <p className="mt-1 text-xs text-ink-600">
          Positions are shares of each slab's own length and of the face's width (thickness on the narrow faces), so slabs of different sizes add up. Each cell
          counts defects, not slabs. Cross-section findings ({section}) are counted in the tables only.
          {placed < data.defects ? ` ${data.defects - placed} defects lack an across position and count along the length only.` : ""}
        </p>
      </Card>
      <div className="space-y-5">
        <Card title="Along the slab, from the head end">
          <BandTable testId="along-table" bands={along} rows={data.grid.map((g) => ({ face: g.face, counts: g.along }))} />
        </Card>
        <Card title="Across the face">
          <BandTable
            testId="across-table"
            caption="Across from the left edge on the broad faces (seen from the head end, inner face up), from the corner with the inner face on the narrow faces."
            bands={across}
            rows={surface.map((g) => ({ face: g.face, counts: g.across }))}
          />
        </Card>
      </div>
    </div>
  );
}

/** Defect counts per face and band, with each face's n. */
function BandTable({ testId, caption, bands, rows }: { testId: string; caption?: string; bands: string[]; rows: { face: string; counts: number[] }[] }) {
  return (
    <TableWrap caption={caption}>
      <table className="w-full text-sm" data-testid={testId}>
        <thead>
          <tr className="border-b-2 border-ink-200">
            <th className={th}>Face</th>
            <th className={thNum}>n</th>
            {bands.map((a) => (
              <th key={a} className={thNum}>
                {a}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {rows.map((g) => (
            <tr key={g.face} className="border-b border-ink-100">
              <td className={`${td} whitespace-nowrap font-semibold`} title={faceLabel(g.face)}>
                {faceShort(g.face)}
              </td>
              <td className={tdNum}>{g.counts.reduce((a, b) => a + b, 0)}</td>
              {g.counts.map((v, i) => (
                <td key={i} className={tdNum}>
                  {v}
                </td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
    </TableWrap>
  );
}
