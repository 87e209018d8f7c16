import type { QueryClient } from "@tanstack/react-query";
import { PageHeader } from "@/components/ui/card";
import { PlantSetupView, plantSetupQuery } from "@/features/plant/components/plant-setup-view";
import { SummaryPanel } from "@/features/plant/components/summary-panel";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "setup.manage");
    void qc.prefetchQuery(plantSetupQuery());
    return null;
  };
}

export function Component() {
  return (
    <div className="space-y-5">
      <PageHeader title="Process" subtitle="The caster's setup and the recent defect picture." />
      <PlantSetupView />
      <SummaryPanel />
    </div>
  );
}

export const ErrorBoundary = RouteError;
