import { useEffect } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { useNavigate } from "react-router";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { authKeys } from "@/features/auth/api/session";
import { catalogueKeys } from "@/features/defects/api/catalogue.queries";
import { defectKeys, todayRange } from "@/features/defects/api/defects.queries";
import { EntriesList, OutboxStatus } from "@/features/defects/components/entries-list";
import { useOutbox } from "@/features/defects/offline/use-outbox";
import { HotYardCaution } from "@/features/plant/components/hot-yard-caution";
import { ScanSlabId } from "@/features/slabs/components/scan-slab-id";
import { CheckFirst, checkFirstOrder } from "@/features/yard/components/check-first";
import { SlabIdFixes } from "@/features/yard/components/slab-id-fixes";
import { WaitingSlabs } from "@/features/yard/components/waiting-slabs";
import { YardSlabFinder } from "@/features/yard/components/yard-slab-finder";
import { YardSyncStatus } from "@/features/yard/components/yard-sync-status";
import { useYardSet } from "@/features/yard/offline/use-yard-sync";
import { waitingInYard } from "@/features/yard/yard-set";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "defects.log");
    // What the logging screen needs, fetched while the network is there.
    void qc.prefetchQuery(catalogueKeys.list());
    void qc.prefetchQuery(defectKeys.mine(todayRange().from));
    return null;
  };
}

export function Component() {
  const { t } = useTranslation("yard");
  const navigate = useNavigate();
  const me = useQuery(authKeys.me());
  // The yard's slabs on this tablet: synced on opening, when the network returns, every few minutes.
  const yard = useYardSet(me.data?.id);
  const range = todayRange();
  const today = useQuery(defectKeys.mine(range.from));
  const outbox = useOutbox();
  // Load the logging screen's code now, so it opens even if the Wi-Fi drops on the way to the slab.
  useEffect(() => void import("./yard-slab"), []);
  const slabs = yard.stored?.data.slabs;
  // Without the server's list, the entries the tablet synced last stand in.
  const serverMine = today.data?.items ?? (today.isError ? (yard.stored?.data.mine ?? []) : []);
  const mine = serverMine.filter((d) => d.foundAt >= range.since);
  const done = new Set([...outbox.entries.map((e) => e.slabId), ...serverMine.map((d) => d.slabId)]);
  const waiting = waitingInYard(slabs ?? [], done);
  // Risk orders the work (the plant's active risk models); it never clears a slab.
  const checkFirst = checkFirstOrder(waiting);
  return (
    <div className="mx-auto max-w-3xl space-y-5">
      <PageHeader title={t("yardPage.title")} subtitle={t("yardPage.subtitle")} />
      <HotYardCaution />
      <Card>
        <div className="flex items-start gap-3">
          <div className="min-w-0 flex-1">
            <YardSlabFinder slabs={slabs} onPick={(slabId) => navigate(`/yard/slabs/${encodeURIComponent(slabId)}`)} />
          </div>
          {/* Level with the field (below its label); a read id is typed into the field with Enter. */}
          <div className="mt-8">
            <ScanSlabId fieldId="slab-finder" />
          </div>
        </div>
      </Card>
      <YardSyncStatus yard={yard} />
      <SlabIdFixes entries={outbox.entries} />
      <OutboxStatus outbox={outbox} />
      {checkFirst.length ? (
        <Card title={t("yardPage.checkFirst")}>
          <CheckFirst ordered={checkFirst} />
        </Card>
      ) : null}
      {slabs ? (
        <Card title={t("yardPage.waiting")}>
          <WaitingSlabs waiting={waiting} />
        </Card>
      ) : null}
      <Card title={t("yardPage.today")} actions={today.isFetching ? <Spinner label={t("yardPage.updating")} /> : null}>
        {today.isError ? (
          <div className="mb-3">
            {outbox.online ? (
              <Notice tone="caution" title={t("yardPage.notUpToDate")}>
                {t("yardPage.notUpToDateText", { message: today.error.message })}
              </Notice>
            ) : (
              <p className="text-sm text-ink-700">{t("yardPage.asOfLastSync")}</p>
            )}
          </div>
        ) : null}
        {today.isPending && !today.isError ? <Spinner label={t("yardPage.loadingToday")} /> : <EntriesList server={mine} outbox={outbox} />}
      </Card>
    </div>
  );
}

export const ErrorBoundary = RouteError;
