import { useQuery, type QueryClient } from "@tanstack/react-query";
import { Link } from "react-router";
import { Trans, useTranslation } from "react-i18next";
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
  const { t } = useTranslation("process");
  const catalogue = useQuery(catalogueKeys.list());
  const taxonomy = useQuery(causeKeys.taxonomy(false));
  const error = catalogue.error ?? taxonomy.error;
  return (
    <div className="space-y-5">
      <PageHeader
        title={t("untaggedPage.title")}
        subtitle={
          <Trans
            t={t}
            i18nKey="untaggedPage.subtitle"
            components={{ 1: <Link to="/causes" className="font-semibold text-strand-700 underline underline-offset-2" /> }}
          />
        }
      />
      {error ? (
        <Notice tone="error">{error.message}</Notice>
      ) : catalogue.data && taxonomy.data ? (
        <UntaggedWorklist types={catalogue.data.types} taxonomy={taxonomy.data} />
      ) : (
        <Spinner label={t("untaggedPage.loading")} />
      )}
    </div>
  );
}

export const ErrorBoundary = RouteError;
