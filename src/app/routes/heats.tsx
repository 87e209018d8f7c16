import { useCallback } from "react";
import { useQuery } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { useSearchParams } from "react-router";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { heatKeys, type HeatListParams } from "@/features/heats/api/heats.queries";
import { HeatFilters } from "@/features/heats/components/heat-filters";
import { effectivePage, effectiveSort, readHeatListParams, writeHeatListParams } from "@/features/heats/components/heat-list-params";
import { HeatsTable } from "@/features/heats/components/heats-table";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { RouteError } from "./route-error";

// The screen's loader is in ./heats.loader.ts: the router holds it from the start.

export function Component() {
  const { t } = useTranslation("heats");
  const [searchParams, setSearchParams] = useSearchParams();
  const params = readHeatListParams(searchParams);
  const list = useQuery(heatKeys.list(params));
  const setup = useQuery(plantKeys.setup());
  const { sort, dir } = effectiveSort(params);
  const { page, pageSize } = effectivePage(params);

  const update = useCallback(
    (patch: Partial<HeatListParams>, resetPage = true) => {
      setSearchParams(
        (prev) => {
          const next = { ...readHeatListParams(prev), ...patch };
          if (resetPage && !("page" in patch)) delete next.page;
          return writeHeatListParams(next);
        },
        { replace: true },
      );
    },
    [setSearchParams],
  );

  return (
    <div className="space-y-5">
      <PageHeader title={t("heatsPage.title")} subtitle={t("heatsPage.subtitle")} />
      <Card>
        <HeatFilters value={params} families={setup.data?.gradeFamilies ?? []} onChange={update} />
      </Card>
      <Card bodyClassName="px-2 py-3 md:px-3 xl:p-4">
        {list.isPending ? (
          <Spinner label={t("heatsPage.loading")} />
        ) : list.isError ? (
          <Notice tone="error">{list.error.message}</Notice>
        ) : (
          <HeatsTable
            data={list.data}
            sort={sort}
            dir={dir}
            page={page}
            pageSize={pageSize}
            loading={list.isPlaceholderData}
            onSort={(s, d) => update({ sort: s, dir: d })}
            onPage={(p, size) => update({ page: p, pageSize: size }, false)}
          />
        )}
      </Card>
    </div>
  );
}

export const ErrorBoundary = RouteError;
