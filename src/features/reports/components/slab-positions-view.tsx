import { lazy, Suspense } from "react";
import { useTranslation } from "react-i18next";
import type { SlabPositions } from "@shared/api/reports";
import { Card } from "@/components/ui/card";
import { Figure } from "./figure";
import { Spinner } from "@/components/ui/logo";
import { useTerms } from "@/i18n/terms";
import { count, num, pct } from "@/lib/format";
import { SmallNWarning } from "./small-n";
import { TableWrap, td, tdNum, th, thNum } from "./tables";

const SlabDensityChart = lazy(() => import("./charts/slab-density-chart"));

/** Below this many defects a position pattern is mostly noise. */
const FEW_DEFECTS = 30;

/** The faces' short names (the table's first column), by their keys. */
const SHORT_FACES = new Set(["inner", "outer", "left", "right", "section"]);

const band = (lo: number, hi: number) => `${num(Math.round(lo * 100))}–${num(Math.round(hi * 100))} %`;

export function SlabPositionsView({ data }: { data: SlabPositions }) {
  const { t } = useTranslation("reports");
  const { term } = useTerms();
  const placed = data.grid.reduce((s, g) => s + g.along.reduce((a, b) => a + b, 0), 0);
  const section = data.byFace.find((f) => f.face === "section")?.defects ?? 0;
  const along = data.alongEdges.slice(0, -1).map((e, i) => band(e, data.alongEdges[i + 1]!));
  const across = data.acrossEdges.slice(0, -1).map((e, i) => band(e, data.acrossEdges[i + 1]!));
  const surface = data.grid.filter((g) => g.face !== "section");
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4">
        <Figure
          label={t("positions.withPosition")}
          value={<span data-testid="positions-n">{count(data.defects)}</span>}
          note={t("positions.onSlabs", { count: data.slabs, n: count(data.slabs) })}
        />
        {data.byFace
          .filter((f) => f.face === "inner" || f.face === "outer")
          .map((f) => (
            <Figure
              key={f.face}
              label={term("faces", f.face)}
              value={count(f.defects)}
              note={t("positions.shareOfN", { share: pct(data.defects ? f.defects / data.defects : null, 1), n: data.defects })}
            />
          ))}
        <Figure
          label={t("positions.narrowFaces")}
          value={data.byFace.filter((f) => f.face === "left" || f.face === "right").reduce((s, f) => s + f.defects, 0)}
          note={section ? t("positions.moreOnSections", { n: section }) : t("positions.leftAndRight")}
        />
      </div>
      <SmallNWarning
        notes={[
          data.defects === 0 ? t("positions.none") : "",
          data.defects > 0 && data.defects < FEW_DEFECTS ? t("positions.few", { count: data.defects, n: count(data.defects) }) : "",
        ]}
      />
      <Card title={t("positions.title")}>
        <Suspense fallback={<Spinner label={t("charts.loading")} />}>
          <SlabDensityChart data={data} />
        </Suspense>
        <p className="mt-1 text-xs text-ink-600">
          {t("positions.explain", { section })}
          {placed < data.defects ? ` ${t("positions.lackAcross", { n: data.defects - placed })}` : ""}
        </p>
      </Card>
      <div className="space-y-5">
        <Card title={t("positions.alongTitle")}>
          <BandTable testId="along-table" bands={along} rows={data.grid.map((g) => ({ face: g.face, counts: g.along }))} />
        </Card>
        <Card title={t("positions.acrossTitle")}>
          <BandTable
            testId="across-table"
            caption={t("positions.acrossCaption")}
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
  const { t } = useTranslation("reports");
  const { term } = useTerms();
  return (
    <TableWrap caption={caption}>
      <table className="w-full text-sm" data-testid={testId}>
        <thead>
          <tr className="border-b-2 border-ink-200">
            <th className={th}>{t("positions.face")}</th>
            <th className={thNum}>{t("rbv.n")}</th>
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
              <td className={`${td} whitespace-nowrap font-semibold`} title={term("faces", g.face)}>
                {SHORT_FACES.has(g.face) ? t(`positions.shortFaces.${g.face}`) : g.face}
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
