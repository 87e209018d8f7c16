import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import { can } from "@shared/roles";
import { PageHeader } from "@/components/ui/card";
import { authKeys } from "@/features/auth/api/session";
import { defectKeys } from "@/features/defects/api/defects.queries";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { SummaryPanel } from "@/features/plant/components/summary-panel";
import { count } from "@/lib/format";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

const awaiting = () => defectKeys.list({ reviewStatus: "new", sort: "oldest", pageSize: 1 });

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "defects.review");
    void qc.prefetchQuery(plantKeys.summary());
    void qc.prefetchQuery(awaiting());
    return null;
  };
}

const tile = "flex min-h-20 flex-col justify-center rounded-lg border-2 px-4 py-3 hover:bg-strand-50";

export function Component() {
  const { t } = useTranslation("reports");
  const me = useQuery(authKeys.me());
  const queue = useQuery(awaiting());
  const waiting = queue.data?.total;
  return (
    <div className="space-y-5">
      <PageHeader title={t("quality.title")} subtitle={t("quality.subtitle")} />
      <div className="grid gap-3 md:grid-cols-2">
        <Link to="/quality/review" className={`${tile} border-strand-700 bg-white`} data-testid="quality-review-link">
          <span className="text-lg font-bold text-ink-900">{t("quality.review")}</span>
          <span className="text-sm text-ink-700">
            {waiting === undefined
              ? t("quality.reviewIntro")
              : waiting
                ? t("quality.awaiting", { count: waiting, n: count(waiting) })
                : t("quality.nothingAwaits")}
          </span>
        </Link>
        <Link to="/reports" className={`${tile} border-ink-300 bg-white`} data-testid="quality-reports-link">
          <span className="text-lg font-bold text-ink-900">{t("quality.reports")}</span>
          <span className="text-sm text-ink-700">{t("quality.reportsIntro")}</span>
        </Link>
        {me.data && can(me.data.roles, "catalogue.manage") ? (
          <Link to="/quality/catalogue" className={`${tile} border-ink-300 bg-white`}>
            <span className="text-lg font-bold text-ink-900">{t("quality.catalogue")}</span>
            <span className="text-sm text-ink-700">{t("quality.catalogueIntro")}</span>
          </Link>
        ) : null}
      </div>
      <SummaryPanel />
    </div>
  );
}

export const ErrorBoundary = RouteError;
