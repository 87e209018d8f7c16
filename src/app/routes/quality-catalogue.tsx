import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
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
  const { t } = useTranslation("review");
  const catalogue = useQuery(catalogueKeys.list(true));
  return (
    <div className="space-y-5">
      <PageHeader title={t("cataloguePage.title")} subtitle={t("cataloguePage.subtitle")} />
      {catalogue.isPending ? (
        <Spinner label={t("loadingCatalogue")} />
      ) : catalogue.isError ? (
        <Notice tone="error">{catalogue.error.message}</Notice>
      ) : (
        <CatalogueEditor types={catalogue.data.types} categories={catalogue.data.categories} />
      )}
    </div>
  );
}

export const ErrorBoundary = RouteError;
