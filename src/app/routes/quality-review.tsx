import { useQuery, type QueryClient } from "@tanstack/react-query";
import { PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { catalogueKeys } from "@/features/defects/api/catalogue.queries";
import { ReviewQueue } from "@/features/defects/components/review-queue";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "defects.review");
    void qc.prefetchQuery(catalogueKeys.list());
    return null;
  };
}

export function Component() {
  const catalogue = useQuery(catalogueKeys.list());
  return (
    <div className="space-y-5">
      <PageHeader
        title="Review queue"
        subtitle="New entries from the yard, in the order you choose: confirm, correct the type or severity, or reject with a reason."
      />
      {catalogue.isPending ? (
        <Spinner label="Loading the catalogue" />
      ) : catalogue.isError ? (
        <Notice tone="error">{catalogue.error.message}</Notice>
      ) : (
        <ReviewQueue types={catalogue.data.types} />
      )}
    </div>
  );
}

export const ErrorBoundary = RouteError;
