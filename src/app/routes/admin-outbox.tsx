import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { useSearchParams, type LoaderFunctionArgs } from "react-router";
import { MAIL_KINDS, MAIL_STATUSES } from "@shared/api/mail";
import { Button } from "@/components/ui/button";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { outboxKeys, type OutboxParams } from "@/features/mail/api/outbox.queries";
import { kindLabel, mailStatusLabel, OutboxTable } from "@/features/mail/components/outbox-view";
import { count } from "@/lib/format";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

const PAGE_SIZE = 50;

const paramsOf = (sp: URLSearchParams): OutboxParams => ({
  status: sp.get("status") || undefined,
  kind: sp.get("kind") || undefined,
  to: sp.get("to") || undefined,
  page: Number(sp.get("page")) > 1 ? Number(sp.get("page")) : 1,
  pageSize: PAGE_SIZE,
});

export function makeLoader(qc: QueryClient) {
  return async ({ request }: LoaderFunctionArgs) => {
    await requireCapability(qc, "outbox.read");
    void qc.prefetchQuery(outboxKeys.page(paramsOf(new URL(request.url).searchParams)));
    return null;
  };
}

const selectClass = "min-h-11 rounded-md border border-ink-300 bg-white px-3 text-sm text-ink-900";

export function Component() {
  const { t } = useTranslation("admin");
  const [sp, setSp] = useSearchParams();
  const params = paramsOf(sp);
  const page = useQuery(outboxKeys.page(params));
  const set = (k: string, v: string | undefined) => {
    const next = new URLSearchParams(sp);
    if (v) next.set(k, v);
    else next.delete(k);
    if (k !== "page") next.delete("page");
    setSp(next, { replace: true });
  };
  const d = page.data;
  const pages = d ? Math.max(1, Math.ceil(d.total / d.pageSize)) : 1;
  const local = d ? /local/i.test(d.transport) || d.items.some((m) => m.received) : false;
  return (
    <div className="space-y-5">
      <PageHeader title={t("outbox.title")} subtitle={t("outbox.subtitle")} />
      {d ? (
        <Notice title={t("outbox.goesTo")}>
          <span data-testid="mail-transport">{d.transport}</span>
        </Notice>
      ) : null}
      <Card>
        <form role="search" aria-label={t("outbox.filters")} className="flex flex-wrap items-end gap-3" onSubmit={(e) => e.preventDefault()}>
          <label className="flex flex-col gap-1">
            <span className="text-sm font-semibold text-ink-800">{t("outbox.status")}</span>
            <select
              value={params.status ?? ""}
              onChange={(e) => set("status", e.target.value || undefined)}
              className={selectClass}
              data-testid="outbox-status"
            >
              <option value="">{t("outbox.everyStatus")}</option>
              {MAIL_STATUSES.map((s) => (
                <option key={s} value={s}>
                  {d?.counts[s] !== undefined ? t("outbox.withCount", { label: mailStatusLabel(t, s), n: count(d.counts[s]) }) : mailStatusLabel(t, s)}
                </option>
              ))}
            </select>
          </label>
          <label className="flex flex-col gap-1">
            <span className="text-sm font-semibold text-ink-800">{t("outbox.kind")}</span>
            <select value={params.kind ?? ""} onChange={(e) => set("kind", e.target.value || undefined)} className={selectClass}>
              <option value="">{t("outbox.everyKind")}</option>
              {MAIL_KINDS.map((k) => (
                <option key={k} value={k}>
                  {kindLabel(t, k)}
                </option>
              ))}
            </select>
          </label>
          <label className="flex flex-col gap-1">
            <span className="text-sm font-semibold text-ink-800">{t("outbox.recipient")}</span>
            <input
              defaultValue={params.to ?? ""}
              onBlur={(e) => set("to", e.target.value.trim() || undefined)}
              onKeyDown={(e) => e.key === "Enter" && set("to", e.currentTarget.value.trim() || undefined)}
              className={selectClass}
            />
          </label>
          {d ? (
            <p className="ml-auto text-sm text-ink-700" data-testid="outbox-total">
              {t("outbox.messages", { count: d.total, n: count(d.total) })}
            </p>
          ) : null}
        </form>
      </Card>
      <Card bodyClassName="px-2 py-3 md:p-4">
        {page.isPending ? (
          <Spinner label={t("outbox.loading")} />
        ) : page.isError ? (
          <Notice tone="error">{page.error.message}</Notice>
        ) : (
          <OutboxTable items={page.data.items} localServer={local} />
        )}
        {d && pages > 1 ? (
          <div className="mt-3 flex items-center gap-2">
            <Button variant="secondary" disabled={d.page <= 1} onClick={() => set("page", String(d.page - 1))}>
              {t("outbox.previous")}
            </Button>
            <span className="text-sm">{t("outbox.page", { page: count(d.page), pages: count(pages) })}</span>
            <Button variant="secondary" disabled={d.page >= pages} onClick={() => set("page", String(d.page + 1))}>
              {t("outbox.next")}
            </Button>
          </div>
        ) : null}
      </Card>
    </div>
  );
}

export const ErrorBoundary = RouteError;
