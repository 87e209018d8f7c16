import { useQuery, type QueryClient } from "@tanstack/react-query";
import { Link } from "react-router";
import { PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { causeKeys } from "@/features/causes/api/causes.queries";
import { UntaggedWorklist } from "@/features/causes/components/untagged-worklist";
import { catalogueKeys } from "@/features/defects/api/catalogue.queries";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "causes.tag");
    void qc.prefetchQuery(catalogueKeys.list());
    void qc.prefetchQuery(causeKeys.taxonomy(false));
    return null;
  };
}

export function Component() {
  const catalogue = useQuery(catalogueKeys.list());
  const taxonomy = useQuery(causeKeys.taxonomy(false));
  const error = catalogue.error ?? taxonomy.error;
  return (
    <div className="space-y-5">
      <PageHeader
        title="Defects without a cause"
        subtitle={
          <>
            Tag them here, one at a time or many at once; a tagged defect leaves the list. Rejected entries need no cause and are not listed. The tags
            themselves are kept under{" "}
            <Link to="/causes" className="font-semibold text-strand-700 underline underline-offset-2">
              Cause tags
            </Link>
            .
          </>
        }
      />
      {error ? (
        <Notice tone="error">{error.message}</Notice>
      ) : catalogue.data && taxonomy.data ? (
        <UntaggedWorklist types={catalogue.data.types} taxonomy={taxonomy.data} />
      ) : (
        <Spinner label="Loading the catalogue and the cause tags" />
      )}
    </div>
  );
}

export const ErrorBoundary = RouteError;
