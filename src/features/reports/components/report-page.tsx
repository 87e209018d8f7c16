import type { ReactNode } from "react";
import type { UseQueryResult } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { Button } from "@/components/ui/button";
import { ApiError } from "@/lib/api-client";
import { count } from "@/lib/format";
import { isWarmingUp, warmingSecondsLeft } from "../api/reports.queries";
import { ExportButton, SaveReport } from "./report-actions";
import { ReportCautions } from "./report-cautions";
import { FilterBar, type FilterChoices } from "./filter-bar";
import { reportSpec, type ReportKind, type ReportParams } from "./report-params";

/**
 * The frame of every report screen: title, save and export, the cautions, the shared filters and
 * the report's own settings, then its figures, charts and tables.
 */
export function ReportPage({
  kind,
  params,
  query,
  choices,
  onChange,
  suggestedName,
  settings,
  canExport = true,
  children,
}: {
  kind: ReportKind;
  params: ReportParams;
  query: string;
  choices: FilterChoices;
  onChange: (patch: Partial<Record<string, string | undefined>>) => void;
  suggestedName: string;
  /** The report's own settings (variable, bins, period…). */
  settings?: ReactNode;
  canExport?: boolean;
  children: ReactNode;
}) {
  const { t } = useTranslation("reports");
  const spec = reportSpec(kind);
  return (
    <div className="space-y-5" data-report={kind}>
      <div>
        <Link to="/reports" className="text-sm font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2">
          {t("page.allReports")}
        </Link>
      </div>
      <PageHeader
        title={spec.title}
        subtitle={spec.summary}
        actions={
          <div className="flex flex-wrap items-start gap-2">
            <SaveReport kind={kind} query={query} suggestedName={suggestedName} />
            <ExportButton kind={kind} query={query} disabled={!canExport} />
          </div>
        }
      />
      <ReportCautions />
      <Card>
        <FilterBar params={params} choices={choices} onChange={onChange} />
        {settings ? (
          <div className="mt-4 border-t border-ink-100 pt-4" aria-label={t("page.settingsLabel")} role="group">
            {settings}
          </div>
        ) : null}
      </Card>
      {children}
    </div>
  );
}

/** A chart or table is waiting for its answer, or the answer is stale while a new one comes. */
export function Updating({ on }: { on: boolean }) {
  const { t } = useTranslation("reports");
  return on ? (
    <span role="status" className="text-xs font-semibold text-ink-600">
      {t("page.updating")}
    </span>
  ) : null;
}

/**
 * The server's refusal in its own words: a refused parameter's message without the internal key it
 * is filed under ("variables: Throughput is computed from casting speed …" reads as the sentence).
 */
function refusalText(error: Error): string {
  if (error instanceof ApiError && error.code === "validation_failed" && Array.isArray(error.details)) {
    const messages = (error.details as { message?: unknown }[]).map((d) => d?.message).filter((m): m is string => typeof m === "string" && m.length > 0);
    if (messages.length) return [...new Set(messages)].join(" ");
  }
  return error.message;
}

/**
 * After a server start (or a large import) the reports' slab data take a while to load: a waiting
 * state, not an error.
 * The query asks again by itself at the pace the server gives; only after a long wait (or when the
 * tries are used up) is there a button.
 */
function WarmingUp({ error, gaveUp, onRetry }: { error: ApiError; gaveUp: boolean; onRetry: () => void }) {
  const { t } = useTranslation("reports");
  const seconds = warmingSecondsLeft(error);
  return (
    <Card>
      <div role="status" aria-live="polite" data-testid="report-warming-up" className="flex items-start gap-4">
        {gaveUp ? null : <span className="mt-1 h-6 w-6 shrink-0 animate-spin rounded-full border-[3px] border-ink-200 border-t-strand-700" aria-hidden />}
        <div className="space-y-1">
          <p className="text-base font-semibold text-ink-900">{t("page.warming.title")}</p>
          <p className="text-sm text-ink-700">
            {seconds ? t("page.warming.loadingSeconds", { seconds: count(seconds) }) : t("page.warming.loading")}{" "}
            {gaveUp ? t("page.warming.longer") : t("page.warming.byItself")}
          </p>
          {gaveUp ? (
            <div className="pt-2">
              <Button onClick={onRetry}>{t("page.warming.retry")}</Button>
            </div>
          ) : null}
        </div>
      </div>
    </Card>
  );
}

/** The report's answer: a spinner while it is computed, the server's message if it refuses, else the figures. */
export function ReportResult<T>({ query, children }: { query: UseQueryResult<T>; children: (data: T) => ReactNode }) {
  const { t } = useTranslation("reports");
  // While warming up the query retries (the error is its failureReason); a kept earlier answer is for other filters.
  const warming = isWarmingUp(query.error ?? query.failureReason) && (query.isPending || query.isError || query.isPlaceholderData);
  return (
    <>
      <div className="-mt-3 flex min-h-4 justify-end">
        <Updating on={query.isFetching && !query.isPending && !warming} />
      </div>
      {warming ? (
        <WarmingUp error={(query.error ?? query.failureReason) as ApiError} gaveUp={query.isError} onRetry={() => void query.refetch()} />
      ) : query.isPending ? (
        <Card>
          <Spinner label={t("page.computing")} />
        </Card>
      ) : query.isError ? (
        <div data-testid="report-refused">
          <Notice tone="error" title={query.error instanceof ApiError && query.error.status === 400 ? t("page.cannotAnswer") : undefined}>
            {refusalText(query.error)}
          </Notice>
        </div>
      ) : (
        children(query.data)
      )}
    </>
  );
}
