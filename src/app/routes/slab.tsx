import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { Link, useParams, type LoaderFunctionArgs } from "react-router";
import { can } from "@shared/roles";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { authKeys } from "@/features/auth/api/session";
import { DefectCausesPanel } from "@/features/causes/components/defect-causes";
import { defectKeys } from "@/features/defects/api/defects.queries";
import { heatKeys } from "@/features/heats/api/heats.queries";
import { reportKeys } from "@/features/reports/api/reports.queries";
import { PhotoStrip } from "@/features/defects/components/photo-viewer";
import { slabKeys } from "@/features/slabs/api/slabs.queries";
import { CrossSection, SlabDrawing, type DrawnMark } from "@/features/slabs/components/slab-drawing";
import { SlabConditionsTable, SlabDefects, SlabDerived, SlabFacts } from "@/features/slabs/components/slab-sections";
import { SlabRisks } from "@/features/risk/components/risk-band";
import { WindowFlags } from "@/features/windows/components/window-flags";
import { count } from "@/lib/format";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

/** The slab's defects with their photos (the slab record counts them only). */
const slabPhotos = (slabId: string) => defectKeys.list({ slab: slabId, pageSize: 200 });

// Kept light on purpose: the inspector opens this on a tablet in the yard; no chart library here.
export function makeLoader(qc: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    await requireCapability(qc, "plant.read");
    await qc.ensureQueryData(slabKeys.detail(params.slabId ?? ""));
    void qc.prefetchQuery(slabPhotos(params.slabId ?? ""));
    return null;
  };
}

export function Component() {
  const { t } = useTranslation("heats");
  const { slabId = "" } = useParams();
  const slab = useQuery(slabKeys.detail(slabId));
  const me = useQuery(authKeys.me());
  const withPhotos = useQuery(slabPhotos(slabId));
  if (slab.isPending) return <Spinner label={t("slabPage.loading")} />;
  if (slab.isError) return <Notice tone="error">{slab.error.message}</Notice>;
  const s = slab.data;
  const inYard = me.data ? can(me.data.roles, "defects.log") : false;
  const readsCauses = me.data ? can(me.data.roles, "causes.read") : false;
  const tagsCauses = me.data ? can(me.data.roles, "causes.tag") : false;
  const opensInvestigations = me.data ? can(me.data.roles, "investigations.manage") : false;
  // A tagging shows on this slab, on its heat, in the defect lists and in the cause report.
  const affects = [slabKeys.all, heatKeys.all, defectKeys.all, reportKeys.all];
  // Rejected entries stay visible, marked, but do not count as defects of the slab.
  const rejected = s.defects.filter((d) => d.reviewStatus === "rejected").length;
  const counted = s.defects.length - rejected;
  const where = { count: counted, n: count(counted), heat: s.heatNo, grade: s.gradeCode, strand: s.strandNo, piece: s.pieceNo };
  // Numbered as in the list below.
  const marks: DrawnMark[] = s.defects.map((d, i) => ({
    key: `d${d.id}`,
    face: d.face,
    alongMm: d.positionAlongMm,
    acrossMm: d.positionAcrossMm,
    lengthMm: d.lengthMm,
    widthMm: d.widthMm,
    severity: d.severity,
    label: i + 1,
  }));
  return (
    <div className="space-y-5">
      <PageHeader
        title={t("slabPage.title", { slab: s.slabId })}
        subtitle={
          rejected
            ? t("slabPage.subtitleRejected", { ...where, rejected: t("slabPage.rejected", { count: rejected, n: count(rejected) }) })
            : t("slabPage.subtitle", where)
        }
        actions={
          inYard ? (
            <div className="flex flex-wrap gap-2">
              <Link
                to={`/yard/slabs/${encodeURIComponent(s.slabId)}`}
                className="flex min-h-12 items-center rounded-md bg-strand-700 px-4 text-base font-semibold text-white hover:bg-strand-800"
              >
                {t("slabPage.logDefect")}
              </Link>
              <Link
                to="/yard"
                className="flex min-h-12 items-center rounded-md border border-ink-300 bg-white px-4 text-base font-semibold text-ink-900 hover:bg-ink-50"
              >
                {t("slabPage.findAnother")}
              </Link>
            </div>
          ) : null
        }
      />
      <WindowFlags names={s.windowFlags} />
      <Card>
        <SlabFacts slab={s} />
      </Card>
      <Card title={t("slabPage.defectsTitle", { n: s.defects.length })}>
        <div className="space-y-4">
          {marks.some((m) => m.face !== "section" && m.alongMm !== null) ? <SlabDrawing slab={s} marks={marks} /> : null}
          {marks.some((m) => m.face === "section") ? (
            <figure className="space-y-1">
              <figcaption className="text-sm font-semibold text-ink-700">{t("slabPage.crossSection")}</figcaption>
              <CrossSection slab={s} marks={marks} />
            </figure>
          ) : null}
          <SlabDefects
            defects={s.defects}
            photos={(id) => {
              const photos = withPhotos.data?.items.find((d) => d.id === id)?.photos;
              return photos ? <PhotoStrip photos={photos} label={t("slabPage.photos")} size="h-20 w-20" /> : null;
            }}
            more={
              readsCauses
                ? (d) => (
                    <div className="space-y-2 rounded-md border border-ink-100 px-3 py-2">
                      <DefectCausesPanel defectId={d.id} causes={d.causes} canTag={tagsCauses} affects={affects} />
                      {opensInvestigations && d.reviewStatus !== "rejected" ? (
                        <Link
                          to={`/investigations/new?defect=${d.id}`}
                          className="inline-flex min-h-11 items-center text-sm font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2"
                          data-testid="open-investigation-defect"
                        >
                          {t("slabPage.openInvestigation")}
                        </Link>
                      ) : null}
                    </div>
                  )
                : undefined
            }
          />
        </div>
      </Card>
      {s.risks.length ? (
        <Card title={t("slabPage.riskTitle")}>
          <SlabRisks risks={s.risks} />
        </Card>
      ) : null}
      <Card title={t("slabPage.conditionsTitle")}>
        <SlabConditionsTable slab={s} />
      </Card>
      <Card title={t("slabPage.derivedTitle")}>
        <SlabDerived conditions={s.conditions} />
      </Card>
    </div>
  );
}

export const ErrorBoundary = RouteError;
