import { useQuery, type QueryClient } from "@tanstack/react-query";
import { Link, useSearchParams, type LoaderFunctionArgs } from "react-router";
import { Trans, useTranslation } from "react-i18next";
import { can } from "@shared/roles";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { authKeys } from "@/features/auth/api/session";
import { investigationKeys, type InvestigationListParams } from "@/features/investigations/api/investigations.queries";
import { InvestigationsTable } from "@/features/investigations/components/investigations-table";
import { count } from "@/lib/format";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

/** The status filter's choices; their words are under investigations.list.status (by value, "" as "all"). */
const STATUS_CHOICES = [{ value: "active" }, { value: "open" }, { value: "in_progress" }, { value: "closed" }, { value: "" }] as const;

const paramsOf = (sp: URLSearchParams): InvestigationListParams => {
  const s = sp.get("status");
  const status = s === null ? "active" : STATUS_CHOICES.some((c) => c.value === s && s !== "") ? (s as InvestigationListParams["status"]) : undefined;
  return { status, heatNo: sp.get("heat") ?? undefined };
};

export function makeLoader(qc: QueryClient) {
  return async ({ request }: LoaderFunctionArgs) => {
    await requireCapability(qc, "investigations.read");
    void qc.prefetchQuery(investigationKeys.list(paramsOf(new URL(request.url).searchParams)));
    return null;
  };
}

export function Component() {
  const { t } = useTranslation("process");
  const [sp, setSp] = useSearchParams();
  const params = paramsOf(sp);
  const list = useQuery(investigationKeys.list(params));
  const me = useQuery(authKeys.me());
  const canManage = me.data ? can(me.data.roles, "investigations.manage") : false;
  const overdue = list.data?.items.reduce((n, i) => n + i.actions.overdue, 0) ?? 0;
  return (
    <div className="space-y-5">
      <PageHeader
        title={t("investigations.list.title")}
        subtitle={t("investigations.list.subtitle")}
        actions={
          canManage ? (
            <Link
              to="/investigations/new"
              className="flex min-h-11 items-center rounded-md bg-strand-700 px-4 text-sm font-semibold text-white hover:bg-strand-800"
            >
              {t("investigations.list.open")}
            </Link>
          ) : null
        }
      />
      <Card>
        <div className="flex flex-wrap items-end gap-4">
          <fieldset>
            <legend className="mb-1 text-sm font-semibold text-ink-800">{t("investigations.table.status")}</legend>
            <div className="flex flex-wrap gap-2" role="radiogroup">
              {STATUS_CHOICES.map((c) => {
                const on = (params.status ?? "") === c.value;
                return (
                  <button
                    key={c.value}
                    type="button"
                    role="radio"
                    aria-checked={on}
                    onClick={() => {
                      const next = new URLSearchParams(sp);
                      next.set("status", c.value);
                      setSp(next, { replace: true });
                    }}
                    className={`min-h-11 rounded-md border-2 px-3 text-sm font-semibold ${on ? "border-strand-700 bg-strand-50 text-ink-900" : "border-ink-200 bg-white text-ink-700"}`}
                  >
                    {t(`investigations.list.status.${c.value || "all"}`)}
                  </button>
                );
              })}
            </div>
          </fieldset>
          {params.heatNo ? (
            <span className="inline-flex min-h-11 items-center gap-2 rounded-md border border-ink-300 bg-ink-50 px-3 text-sm">
              <span>
                <Trans t={t} i18nKey="investigations.list.heat" values={{ heat: params.heatNo }} components={{ 1: <strong /> }} />
              </span>
              <button
                type="button"
                className="min-h-9 font-semibold text-strand-700 underline"
                onClick={() => {
                  const next = new URLSearchParams(sp);
                  next.delete("heat");
                  setSp(next, { replace: true });
                }}
              >
                {t("investigations.list.remove")}
              </button>
            </span>
          ) : null}
          {list.data ? (
            <p className="ml-auto text-sm text-ink-700" data-testid="investigations-count">
              {t("investigations.list.count", {
                count: list.data.items.length,
                n: count(list.data.items.length),
                overdue: t("investigations.list.overdueActions", { count: overdue, n: count(overdue) }),
              })}
            </p>
          ) : null}
        </div>
      </Card>
      <Card bodyClassName="px-2 py-3 md:p-4">
        {list.isPending ? (
          <Spinner label={t("investigations.list.loading")} />
        ) : list.isError ? (
          <Notice tone="error">{list.error.message}</Notice>
        ) : (
          <InvestigationsTable items={list.data.items} />
        )}
      </Card>
    </div>
  );
}

export const ErrorBoundary = RouteError;
