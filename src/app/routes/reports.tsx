import { useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import { Button } from "@/components/ui/button";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { savedReportKeys, useDeleteSavedReport, type SavedReport } from "@/features/reports/api/saved-reports.queries";
import { ReportCautions } from "@/features/reports/components/report-cautions";
import {
  describeFilters,
  describeSettings,
  isReportKind,
  readReportParams,
  REPORTS,
  reportPath,
  reportSpec,
} from "@/features/reports/components/report-params";
import { date } from "@/lib/format";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "reports.read");
    void qc.prefetchQuery(savedReportKeys.list());
    return null;
  };
}

function SavedRow({ r }: { r: SavedReport }) {
  const { t } = useTranslation("reports");
  const del = useDeleteSavedReport();
  const [confirm, setConfirm] = useState(false);
  const kind = isReportKind(r.reportKind) ? r.reportKind : null;
  const params = kind ? readReportParams(kind, new URLSearchParams(r.query)) : {};
  return (
    <tr className="border-b border-ink-100 align-top" data-testid="saved-report-row">
      <td className="px-2 py-2">
        {kind ? (
          <Link to={reportPath(kind, r.query)} className="font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2" data-field="name">
            {r.name}
          </Link>
        ) : (
          <span data-field="name">{r.name}</span>
        )}
      </td>
      <td className="px-2 py-2">
        <span data-field="kind">{kind ? reportSpec(kind).title : r.reportKind}</span>
        {kind ? <div className="text-xs text-ink-600">{describeSettings(kind, params)}</div> : null}
      </td>
      <td className="px-2 py-2 text-ink-700">{describeFilters(params)}</td>
      <td className="whitespace-nowrap px-2 py-2 tabular-nums">{date(r.createdAt)}</td>
      <td className="px-2 py-2 text-right">
        {confirm ? (
          <span className="inline-flex flex-wrap justify-end gap-2">
            <Button variant="danger" disabled={del.isPending} onClick={() => del.mutate(r.id)}>
              {del.isPending ? t("home.deleting") : t("home.delete")}
            </Button>
            <Button variant="ghost" onClick={() => setConfirm(false)}>
              {t("home.keep")}
            </Button>
          </span>
        ) : (
          <Button variant="ghost" onClick={() => setConfirm(true)} aria-label={t("home.deleteLabel", { name: r.name })}>
            {t("home.deleteAsk")}
          </Button>
        )}
        {del.isError ? <Notice tone="error">{del.error.message}</Notice> : null}
      </td>
    </tr>
  );
}

export function Component() {
  const { t } = useTranslation("reports");
  const saved = useQuery(savedReportKeys.list());
  return (
    <div className="space-y-5">
      <PageHeader title={t("home.title")} subtitle={t("home.subtitle")} />
      <ReportCautions open />
      <div className="grid gap-3 md:grid-cols-2 xl:grid-cols-3" data-testid="report-list">
        {REPORTS.map((r) => (
          <Link
            key={r.kind}
            to={reportPath(r.kind)}
            className="flex min-h-24 flex-col justify-center rounded-lg border-2 border-ink-300 bg-white px-4 py-3 hover:border-strand-700 hover:bg-strand-50"
          >
            <span className="text-lg font-bold text-ink-900">{r.title}</span>
            <span className="text-sm text-ink-700">{r.summary}</span>
          </Link>
        ))}
      </div>
      <Card title={t("home.saved")}>
        {saved.isPending ? (
          <Spinner label={t("home.loading")} />
        ) : saved.isError ? (
          <Notice tone="error">{saved.error.message}</Notice>
        ) : saved.data.reports.length === 0 ? (
          <p className="text-sm text-ink-600" data-testid="no-saved-reports">
            {t("home.none")}
          </p>
        ) : (
          <div className="overflow-x-auto">
            <table className="w-full text-sm" data-testid="saved-reports">
              <thead>
                <tr className="border-b-2 border-ink-200 text-left text-xs font-semibold text-ink-700">
                  <th className="px-2 py-2">{t("home.name")}</th>
                  <th className="px-2 py-2">{t("home.report")}</th>
                  <th className="px-2 py-2">{t("home.filters")}</th>
                  <th className="px-2 py-2">{t("home.savedAt")}</th>
                  <th className="px-2 py-2" />
                </tr>
              </thead>
              <tbody>
                {saved.data.reports.map((r) => (
                  <SavedRow key={r.id} r={r} />
                ))}
              </tbody>
            </table>
          </div>
        )}
      </Card>
    </div>
  );
}

export const ErrorBoundary = RouteError;
