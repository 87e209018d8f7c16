import { useCallback } from "react";
import { useQuery, useQueryClient, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { heatKeys } from "@/features/heats/api/heats.queries";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { GradesEditor } from "@/features/plant/components/grades-editor";
import { PlantSettingsForm } from "@/features/plant/components/plant-settings-form";
import { StrandSettingsForm } from "@/features/plant/components/strand-settings-form";
import { plainNumber } from "@/features/users/components/form-messages";
import { slabKeys } from "@/features/slabs/api/slabs.queries";
import { yardKeys } from "@/features/yard/api/yard.queries";
import { YardSettingsForm } from "@/features/yard/components/yard-settings-form";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "setup.manage");
    void qc.prefetchQuery(plantKeys.setup());
    void qc.prefetchQuery(plantKeys.settings());
    void qc.prefetchQuery(yardKeys.settings());
    return null;
  };
}

export function Component() {
  const { t } = useTranslation("admin");
  const qc = useQueryClient();
  const setup = useQuery(plantKeys.setup());
  const settings = useQuery(plantKeys.settings());
  const yardSettings = useQuery(yardKeys.settings());
  // Recomputed slabs change what the heat and slab pages show.
  const onRecomputed = useCallback(() => {
    void qc.invalidateQueries({ queryKey: heatKeys.all });
    void qc.invalidateQueries({ queryKey: slabKeys.all });
  }, [qc]);

  return (
    <div className="space-y-5">
      <PageHeader title={t("setup.title")} subtitle={t("setup.subtitle")} />
      <Notice tone="info" title={t("setup.auditedTitle")}>
        {t("setup.audited")}
      </Notice>

      {setup.isPending ? (
        <Spinner label={t("setup.loadingSetup")} />
      ) : setup.isError ? (
        <Notice tone="error">{setup.error.message}</Notice>
      ) : (
        <>
          {setup.data.casters.map((c) => (
            <Card key={c.id} title={`${c.code} — ${c.name}`}>
              <p className="mb-4 text-sm text-ink-600">
                {c.worksName} · {t(`setup.machineTypes.${c.machineType}`, { defaultValue: c.machineType })}
                {c.radiusM ? t("setup.radius", { radius: plainNumber(c.radiusM) }) : ""}
              </p>
              <div className="grid gap-6 xl:grid-cols-2">
                {c.strands.map((s) => (
                  <section key={s.id} aria-label={t("setup.strand", { strand: s.strandNo })} className="space-y-3 rounded-md border border-ink-200 p-3">
                    <h3 className="text-base font-semibold">{t("setup.strand", { strand: s.strandNo })}</h3>
                    <StrandSettingsForm casterCode={c.code} strand={s} onRecomputed={onRecomputed} />
                  </section>
                ))}
              </div>
            </Card>
          ))}
          <Card title={t("setup.formulaSettings")}>
            {settings.isPending ? (
              <Spinner label={t("setup.loadingSettings")} />
            ) : settings.isError ? (
              <Notice tone="error">{settings.error.message}</Notice>
            ) : (
              <PlantSettingsForm settings={settings.data} onRecomputed={onRecomputed} />
            )}
          </Card>
          <Card title={t("setup.yardTablets")}>
            {yardSettings.isPending ? (
              <Spinner label={t("setup.loadingYardSettings")} />
            ) : yardSettings.isError ? (
              <Notice tone="error">{yardSettings.error.message}</Notice>
            ) : (
              <YardSettingsForm settings={yardSettings.data} />
            )}
          </Card>
          <Card title={t("setup.grades")}>
            <GradesEditor families={setup.data.gradeFamilies} />
          </Card>
        </>
      )}
    </div>
  );
}

export const ErrorBoundary = RouteError;
