import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { Link, useParams, type LoaderFunctionArgs } from "react-router";
import { can } from "@shared/roles";
import { PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { authKeys } from "@/features/auth/api/session";
import { claimKeys } from "@/features/claims/api/claims.queries";
import { ClaimAttachmentsCard, ClaimHeatsCard, ClaimHistoryCard, ClaimSummaryCard, LinkedSlabsCard } from "@/features/claims/components/claim-detail";
import { ClaimStatusMark } from "@/features/claims/components/claim-marks";
import { useTerms } from "@/i18n/terms";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

const idOf = (raw: string | undefined) => Number(raw);

export function makeLoader(qc: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    await requireCapability(qc, "claims.read");
    await qc.ensureQueryData(claimKeys.detail(idOf(params.id)));
    return null;
  };
}

export function Component() {
  const { t } = useTranslation("claims");
  const { term } = useTerms();
  const { id } = useParams();
  const me = useQuery(authKeys.me());
  const roles = me.data?.roles ?? [];
  const canManage = can(roles, "claims.manage");
  const claim = useQuery(claimKeys.detail(idOf(id)));
  if (claim.isPending) return <Spinner label={t("claimPage.loading")} />;
  if (claim.isError) return <Notice tone="error">{claim.error.message}</Notice>;
  const c = claim.data;
  return (
    <div className="space-y-5">
      <div>
        <Link to="/claims" className="text-sm font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2">
          {t("allClaims")}
        </Link>
      </div>
      <PageHeader
        title={t("claimPage.title", { claimNo: c.claimNo })}
        subtitle={
          // Each separator travels with the item after it, so a wrapped line never ends in a lone "·".
          <span className="inline-flex flex-wrap items-center gap-x-2" data-testid="claim-subtitle">
            <span>{c.customer}</span>
            <span className="inline-flex items-center gap-2 whitespace-nowrap">
              <span aria-hidden>·</span>
              <ClaimStatusMark status={c.status} label={term("claimStatus", c.status)} />
            </span>
            {canManage ? null : (
              <span className="inline-flex items-center gap-2">
                <span aria-hidden>·</span>
                <span>{t("claimPage.readOnly")}</span>
              </span>
            )}
          </span>
        }
      />
      <Notice tone="info" title={t("procedure.title")}>
        {t("procedure.text")}
      </Notice>
      {/* Keyed by the notes so a saved change resets the editor to what the server holds. */}
      <ClaimSummaryCard key={c.notes ?? ""} claim={c} canManage={canManage} />
      <LinkedSlabsCard claim={c} canManage={canManage} />
      <ClaimHeatsCard claim={c} canExport={can(roles, "history.export")} canSend={can(roles, "claims.manage")} />
      <div className="grid gap-5 xl:grid-cols-2">
        <ClaimAttachmentsCard claim={c} canManage={canManage} />
        <ClaimHistoryCard claim={c} />
      </div>
    </div>
  );
}

export const ErrorBoundary = RouteError;
