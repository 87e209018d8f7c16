import type { QueryClient } from "@tanstack/react-query";
import { Link } from "react-router";
import { PageHeader } from "@/components/ui/card";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { PlantSetupView } from "@/features/plant/components/plant-setup-view";
import { SummaryPanel } from "@/features/plant/components/summary-panel";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "setup.manage");
    void qc.prefetchQuery(plantKeys.setup());
    return null;
  };
}

export function Component() {
  return (
    <div className="space-y-5">
      <PageHeader
        title="Process"
        subtitle="The caster's setup and the recent defect picture."
        actions={
          <div className="flex flex-wrap gap-2">
            <Link to="/import" className="flex min-h-11 items-center rounded-md bg-strand-700 px-4 text-sm font-semibold text-white hover:bg-strand-800">
              Import heats, slabs or samples
            </Link>
            <Link to="/reports" className="flex min-h-11 items-center rounded-md border border-ink-300 bg-white px-4 text-sm font-semibold text-ink-900 hover:bg-ink-50" data-testid="process-reports-link">
              Reports
            </Link>
            <Link to="/setup" className="flex min-h-11 items-center rounded-md border border-ink-300 bg-white px-4 text-sm font-semibold text-ink-900 hover:bg-ink-50">
              Change the setup
            </Link>
          </div>
        }
      />
      <PlantSetupView />
      <SummaryPanel />
    </div>
  );
}

export const ErrorBoundary = RouteError;
