import { useEffect } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useNavigate } from "react-router";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { catalogueKeys } from "@/features/defects/api/catalogue.queries";
import { defectKeys, todayRange } from "@/features/defects/api/defects.queries";
import { EntriesList, OutboxStatus } from "@/features/defects/components/entries-list";
import { useOutbox } from "@/features/defects/offline/use-outbox";
import { HotYardCaution } from "@/features/plant/components/hot-yard-caution";
import { SlabFinder } from "@/features/plant/components/slab-finder";
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
  const navigate = useNavigate();
  const range = todayRange();
  const today = useQuery(defectKeys.mine(range.from));
  const outbox = useOutbox();
  // Load the logging screen's code now, so it opens even if the Wi-Fi drops on the way to the slab.
  useEffect(() => void import("./yard-slab"), []);
  const mine = (today.data?.items ?? []).filter((d) => d.foundAt >= range.since);
  return (
    <div className="mx-auto max-w-3xl space-y-5">
      <PageHeader title="Find a slab" subtitle="Type the id or scan the slab's label." />
      <HotYardCaution />
      <Card>
        <SlabFinder onPick={(s) => navigate(`/yard/slabs/${encodeURIComponent(s.slabId)}`)} />
      </Card>
      <OutboxStatus outbox={outbox} />
      <Card title="Your entries today" actions={today.isFetching ? <Spinner label="Updating" /> : null}>
        {today.isError ? (
          <div className="mb-3">
            <Notice tone="caution" title="Not up to date">
              {today.error.message} Entries on this tablet are shown; the server's list comes back with the network.
            </Notice>
          </div>
        ) : null}
        {today.isPending && !today.isError ? <Spinner label="Loading today's entries" /> : <EntriesList server={mine} outbox={outbox} />}
      </Card>
    </div>
  );
}

export const ErrorBoundary = RouteError;
