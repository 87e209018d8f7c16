import { useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { Link, useSearchParams, type LoaderFunctionArgs } from "react-router";
import { CLAIM_STATUSES, type ClaimStatus } from "@shared/domain";
import { can } from "@shared/roles";
import { Button } from "@/components/ui/button";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { authKeys } from "@/features/auth/api/session";
import { claimKeys, type ClaimListParams } from "@/features/claims/api/claims.queries";
import { ClaimsTable } from "@/features/claims/components/claims-table";
import { useTerms } from "@/i18n/terms";
import { count } from "@/lib/format";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

const paramsOf = (sp: URLSearchParams): ClaimListParams => {
  const s = sp.get("status");
  return {
    status: s && (CLAIM_STATUSES as readonly string[]).includes(s) ? (s as ClaimStatus) : undefined,
    q: sp.get("q")?.trim() || undefined,
  };
};

export function makeLoader(qc: QueryClient) {
  return async ({ request }: LoaderFunctionArgs) => {
    await requireCapability(qc, "claims.read");
    void qc.prefetchQuery(claimKeys.list(paramsOf(new URL(request.url).searchParams)));
    return null;
  };
}

const primaryLink = "flex min-h-11 items-center rounded-md bg-strand-700 px-4 text-sm font-semibold text-white hover:bg-strand-800";
const secondaryLink = "flex min-h-11 items-center rounded-md border border-ink-300 bg-white px-4 text-sm font-semibold text-ink-900 hover:bg-ink-50";

/** "3 claims under review matching “K26”": the list's count, with the status and the search when given. */
function countKey(params: ClaimListParams) {
  if (params.status) return params.q ? "home.countStatusQuery" : "home.countStatus";
  return params.q ? "home.countQuery" : "home.count";
}

export function Component() {
  const { t } = useTranslation("claims");
  const { term } = useTerms();
  const [sp, setSp] = useSearchParams();
  const params = paramsOf(sp);
  const list = useQuery(claimKeys.list(params));
  const me = useQuery(authKeys.me());
  const canManage = me.data ? can(me.data.roles, "claims.manage") : false;
  const [text, setText] = useState(params.q ?? "");
  const set = (key: "status" | "q", value: string | undefined) => {
    const next = new URLSearchParams(sp);
    if (value) next.set(key, value);
    else next.delete(key);
    setSp(next, { replace: true });
  };
  return (
    <div className="space-y-5">
      <PageHeader
        title={t("home.title")}
        subtitle={canManage ? t("home.subtitle") : t("home.subtitleReadOnly")}
        actions={
          <div className="flex flex-wrap gap-2">
            <Link to="/trace" className={secondaryLink} data-testid="claims-trace">
              {t("home.traceLink")}
            </Link>
            {canManage ? (
              <Link to="/claims/new" className={primaryLink} data-testid="record-claim">
                {t("home.recordLink")}
              </Link>
            ) : null}
          </div>
        }
      />
      <Notice tone="info" title={t("procedure.title")}>
        {t("procedure.text")}
      </Notice>
      <Card>
        <div className="flex flex-wrap items-end gap-4">
          <fieldset>
            <legend className="mb-1 text-sm font-semibold text-ink-800">{t("home.status")}</legend>
            <div className="flex flex-wrap gap-2" role="radiogroup" aria-label={t("home.status")}>
              {[{ value: "", label: t("home.allStatuses") }, ...CLAIM_STATUSES.map((s) => ({ value: s, label: term("claimStatus", s) }))].map((c) => {
                const on = (params.status ?? "") === c.value;
                return (
                  <button
                    key={c.value}
                    type="button"
                    role="radio"
                    aria-checked={on}
                    onClick={() => set("status", c.value || undefined)}
                    className={`min-h-11 rounded-md border-2 px-3 text-sm font-semibold ${on ? "border-strand-700 bg-strand-50 text-ink-900" : "border-ink-200 bg-white text-ink-700"}`}
                  >
                    {c.label}
                  </button>
                );
              })}
            </div>
          </fieldset>
          <form
            role="search"
            aria-label={t("home.searchLabel")}
            className="flex min-w-64 flex-1 items-end gap-2"
            onSubmit={(e) => {
              e.preventDefault();
              set("q", text.trim() || undefined);
            }}
          >
            <label className="flex flex-1 flex-col gap-1">
              <span className="text-sm font-semibold text-ink-800">{t("home.search")}</span>
              <input
                type="search"
                value={text}
                onChange={(e) => setText(e.target.value)}
                maxLength={80}
                placeholder={t("home.searchPlaceholder")}
                className="min-h-11 w-full rounded-md border border-ink-300 bg-white px-3 text-ink-900 placeholder:text-ink-400"
                data-testid="claims-search"
              />
            </label>
            <Button type="submit" variant="secondary">
              {t("home.searchButton")}
            </Button>
          </form>
        </div>
        {list.data ? (
          <p className="mt-3 text-sm text-ink-700" data-testid="claims-count">
            {t(countKey(params), {
              count: list.data.items.length,
              n: count(list.data.items.length),
              status: params.status ? t(`home.statusInCount.${params.status}`) : "",
              q: params.q ?? "",
            })}
          </p>
        ) : null}
      </Card>
      <Card bodyClassName="px-2 py-3 md:p-4">
        {list.isPending ? (
          <Spinner label={t("home.loading")} />
        ) : list.isError ? (
          <Notice tone="error">{list.error.message}</Notice>
        ) : (
          <ClaimsTable items={list.data.items} />
        )}
      </Card>
    </div>
  );
}

export const ErrorBoundary = RouteError;
