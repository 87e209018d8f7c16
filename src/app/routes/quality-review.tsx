import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
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
  const { t } = useTranslation("review");
  const catalogue = useQuery(catalogueKeys.list());
  return (
    <div className="space-y-5">
      <PageHeader title={t("queuePage.title")} subtitle={t("queuePage.subtitle")} />
      {catalogue.isPending ? (
        <Spinner label={t("loadingCatalogue")} />
      ) : catalogue.isError ? (
        <Notice tone="error">{catalogue.error.message}</Notice>
      ) : (
        <ReviewQueue types={catalogue.data.types} />
      )}
    </div>
  );
}

export const ErrorBoundary = RouteError;
