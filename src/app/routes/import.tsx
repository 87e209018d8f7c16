import { useQuery, useQueryClient, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { heatKeys } from "@/features/heats/api/heats.queries";
import { importKeys } from "@/features/imports/api/imports.queries";
import { ImportPanel } from "@/features/imports/components/import-panel";
import { ImportRunsTable } from "@/features/imports/components/import-runs";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { slabKeys } from "@/features/slabs/api/slabs.queries";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "imports.run");
    void qc.prefetchQuery(importKeys.runs());
    return null;
  };
}

export function Component() {
  const { t } = useTranslation("admin");
  const qc = useQueryClient();
  const runs = useQuery(importKeys.runs());
  return (
    <div className="space-y-5">
      <PageHeader title={t("imports.title")} subtitle={t("imports.subtitle")} />
      <ImportPanel
        onImported={() => {
          // New rows change the heats, the slabs' conditions and the plant's totals.
          void qc.invalidateQueries({ queryKey: heatKeys.all });
          void qc.invalidateQueries({ queryKey: slabKeys.all });
          void qc.invalidateQueries({ queryKey: plantKeys.summary().queryKey });
        }}
      />
      <Card title={t("imports.recent")}>
        {runs.isPending ? (
          <Spinner label={t("imports.loadingRecent")} />
        ) : runs.isError ? (
          <Notice tone="error">{runs.error.message}</Notice>
        ) : (
          <ImportRunsTable runs={runs.data.runs} />
        )}
      </Card>
    </div>
  );
}

export const ErrorBoundary = RouteError;
