import type { QueryClient } from "@tanstack/react-query";
import { PageHeader } from "@/components/ui/card";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { SummaryPanel } from "@/features/plant/components/summary-panel";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "defects.review");
    void qc.prefetchQuery(plantKeys.summary());
    return null;
  };
}

export function Component() {
  return (
    <div className="space-y-5">
      <PageHeader title="Quality" subtitle="Defect rates of the slabs cast recently." />
      <SummaryPanel />
    </div>
  );
}

export const ErrorBoundary = RouteError;
