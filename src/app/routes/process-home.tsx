import { useQuery, type QueryClient } from "@tanstack/react-query";
import { Link } from "react-router";
import { useTranslation } from "react-i18next";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { defectKeys } from "@/features/defects/api/defects.queries";
import { investigationKeys } from "@/features/investigations/api/investigations.queries";
import { InvestigationStatusMark, OverdueMark } from "@/features/investigations/components/investigation-marks";
import { count } from "@/lib/format";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { PlantSetupView } from "@/features/plant/components/plant-setup-view";
import { SummaryPanel } from "@/features/plant/components/summary-panel";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "setup.manage");
    void qc.prefetchQuery(plantKeys.setup());
    void qc.prefetchQuery(investigationKeys.list({ status: "active" }));
    void qc.prefetchQuery(defectKeys.list(UNTAGGED));
    return null;
  };
}

const UNTAGGED = { causes: "none", sort: "newest", pageSize: 1 } as const;

/** How many defects wait for a cause, and the way to the worklist. */
function UntaggedLink() {
  const { t } = useTranslation("process");
  const untagged = useQuery(defectKeys.list(UNTAGGED));
  return (
    <div className="flex flex-wrap items-center justify-between gap-3" data-testid="process-untagged">
      <p className="text-sm text-ink-700">
        {untagged.isPending
          ? t("home.counting")
          : untagged.isError
            ? untagged.error.message
            : untagged.data.total
              ? t("home.untagged", { count: untagged.data.total, n: count(untagged.data.total) })
              : t("home.allTagged")}
      </p>
      <Link
        to="/causes/untagged"
        className="inline-flex min-h-11 items-center rounded-md border border-ink-300 bg-white px-4 text-sm font-semibold text-ink-900 hover:bg-ink-50"
      >
        {t("home.tagUntagged")}
      </Link>
    </div>
  );
}

/** The engineer's open investigations, those with overdue actions first. */
function OpenInvestigations() {
  const { t } = useTranslation("process");
  const list = useQuery(investigationKeys.list({ status: "active" }));
  if (list.isPending) return <Spinner label={t("home.loadingInvestigations")} />;
  if (list.isError) return <Notice tone="error">{list.error.message}</Notice>;
  const items = [...list.data.items].sort((a, b) => b.actions.overdue - a.actions.overdue || a.openedAt.localeCompare(b.openedAt));
  const overdue = items.reduce((n, i) => n + i.actions.overdue, 0);
  return (
    <div className="space-y-3" data-testid="process-investigations">
      <p className="text-sm text-ink-700">
        {overdue ? (
          <>
            {t("home.investigationsOpen", { count: items.length, n: count(items.length) })}
            {" · "}
            <OverdueMark label={t("home.actionsOverdue", { count: overdue, n: count(overdue) })} />
          </>
        ) : (
          t("home.investigationsOpenNoneOverdue", { count: items.length, n: count(items.length) })
        )}
      </p>
      {items.length ? (
        <ul className="divide-y divide-ink-100">
          {items.map((i) => (
            <li key={i.id} className="flex flex-wrap items-center gap-x-4 gap-y-1 py-1" data-testid="process-investigation">
              <Link
                to={`/investigations/${i.id}`}
                className="inline-flex min-h-11 flex-1 items-center font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2"
              >
                {i.ref} · {i.title}
              </Link>
              <InvestigationStatusMark status={i.status} />
              <span className="text-sm text-ink-700">{t("home.openActions", { count: i.actions.open, n: count(i.actions.open) })}</span>
              {i.actions.overdue ? <OverdueMark label={t("home.overdue", { n: count(i.actions.overdue) })} /> : null}
            </li>
          ))}
        </ul>
      ) : null}
      <Link to="/investigations" className="inline-flex min-h-11 items-center text-sm font-semibold text-strand-700 underline">
        {t("home.allInvestigations")}
      </Link>
    </div>
  );
}

export function Component() {
  const { t } = useTranslation("process");
  return (
    <div className="space-y-5">
      <PageHeader
        title={t("home.title")}
        subtitle={t("home.subtitle")}
        actions={
          <div className="flex flex-wrap gap-2">
            <Link to="/import" className="flex min-h-11 items-center rounded-md bg-strand-700 px-4 text-sm font-semibold text-white hover:bg-strand-800">
              {t("home.import")}
            </Link>
            <Link
              to="/reports"
              className="flex min-h-11 items-center rounded-md border border-ink-300 bg-white px-4 text-sm font-semibold text-ink-900 hover:bg-ink-50"
              data-testid="process-reports-link"
            >
              {t("home.reports")}
            </Link>
            <Link
              to="/setup"
              className="flex min-h-11 items-center rounded-md border border-ink-300 bg-white px-4 text-sm font-semibold text-ink-900 hover:bg-ink-50"
            >
              {t("home.changeSetup")}
            </Link>
          </div>
        }
      />
      <Card title={t("home.untaggedCard")}>
        <UntaggedLink />
      </Card>
      <Card title={t("home.investigationsCard")}>
        <OpenInvestigations />
      </Card>
      <PlantSetupView />
      <SummaryPanel />
    </div>
  );
}

export const ErrorBoundary = RouteError;
