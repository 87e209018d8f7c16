import { useQuery, type QueryClient } from "@tanstack/react-query";
import { PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { catalogueKeys } from "@/features/defects/api/catalogue.queries";
import { CatalogueEditor } from "@/features/defects/components/catalogue-editor";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "catalogue.manage");
    void qc.prefetchQuery(catalogueKeys.list(true));
    return null;
  };
}

export function Component() {
  const catalogue = useQuery(catalogueKeys.list(true));
  return (
    <div className="space-y-5">
      <PageHeader
        title="Defect catalogue"
        subtitle="The types the yard chooses from, in their categories. A retired type keeps its past entries and leaves the yard's list."
      />
      {catalogue.isPending ? (
        <Spinner label="Loading the catalogue" />
      ) : catalogue.isError ? (
        <Notice tone="error">{catalogue.error.message}</Notice>
      ) : (
        <CatalogueEditor types={catalogue.data.types} categories={catalogue.data.categories} />
      )}
    </div>
  );
}

export const ErrorBoundary = RouteError;
