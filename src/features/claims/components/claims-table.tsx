import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import type { ClaimSummary } from "@shared/api/claims";
import { CLAIM_STATUSES, type ClaimStatus } from "@shared/domain";
import { useTerms } from "@/i18n/terms";
import { count, day, withUnit } from "@/lib/format";
import { ClaimStatusMark } from "./claim-marks";

const link = "font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2";
// German headers are long single words ("Verwendungsentscheid"): they may break with a hyphen.
const th = "px-2 py-2 text-left text-xs font-semibold uppercase tracking-wide text-ink-600 hyphens-auto";

export function ClaimsTable({ items, empty }: { items: ClaimSummary[]; empty?: string }) {
  const { t } = useTranslation("claims");
  const { term } = useTerms();
  // The status words once per list, not once per row.
  const statusLabel = useMemo(() => Object.fromEntries(CLAIM_STATUSES.map((s) => [s, term("claimStatus", s)])) as Record<ClaimStatus, string>, [term]);
  if (!items.length)
    return (
      <p className="px-2 text-sm text-ink-600" data-testid="claims-empty">
        {empty ?? t("claimsTable.empty")}
      </p>
    );
  const noProducts = t("claimsTable.noProducts");
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-sm" data-testid="claims-table">
        <thead>
          <tr className="border-b-2 border-ink-200">
            <th className={th}>{t("claimsTable.claim")}</th>
            <th className={th}>{t("claimsTable.customer")}</th>
            <th className={th}>{t("claimsTable.received")}</th>
            <th className={th}>{t("claimsTable.status")}</th>
            <th className={th}>{t("claimsTable.complaint")}</th>
            <th className={`${th} text-right`}>{t("claimsTable.slabs")}</th>
            <th className={`${th} text-right`}>{t("claimsTable.heats")}</th>
          </tr>
        </thead>
        <tbody>
          {items.map((c) => (
            <tr key={c.id} className="border-b border-ink-100 align-top" data-testid="claim-row" data-claim-no={c.claimNo}>
              <td className="px-2 py-1">
                <Link to={`/claims/${c.id}`} className={`${link} inline-flex min-h-11 items-center whitespace-nowrap`} data-field="claimNo">
                  {c.claimNo}
                </Link>
              </td>
              <td className="px-2 py-2.5" data-field="customer">
                {c.customer}
              </td>
              <td className="whitespace-nowrap px-2 py-2.5" data-field="receivedOn">
                {day(c.receivedOn)}
              </td>
              <td className="px-2 py-2.5" data-field="status">
                <ClaimStatusMark status={c.status} label={statusLabel[c.status]} />
              </td>
              <td className="px-2 py-2.5">
                <div className="line-clamp-2 max-w-md">{c.defectComplained}</div>
                <div className="text-xs text-ink-600">
                  {c.productIds.length ? t("claimsTable.products", { count: c.productIds.length, n: count(c.productIds.length) }) : noProducts}
                  {c.quantityT !== null ? ` · ${withUnit(c.quantityT, "t", 2)}` : ""}
                </div>
              </td>
              <td className="px-2 py-2.5 text-right tabular-nums" data-field="slabs">
                {c.slabs}
              </td>
              <td className="px-2 py-2.5 text-right tabular-nums" data-field="heats" title={c.heats.join(", ")}>
                {c.heats.length}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
