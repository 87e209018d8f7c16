import { Link } from "react-router";
import type { ClaimSummary } from "@shared/api/claims";
import { day, plural, withUnit } from "@/lib/format";
import { ClaimStatusMark } from "./claim-marks";

const link = "font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2";
const th = "px-2 py-2 text-left text-xs font-semibold uppercase tracking-wide text-ink-600";

export function ClaimsTable({ items, empty = "No claim matches." }: { items: ClaimSummary[]; empty?: string }) {
  if (!items.length)
    return (
      <p className="px-2 text-sm text-ink-600" data-testid="claims-empty">
        {empty}
      </p>
    );
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-sm" data-testid="claims-table">
        <thead>
          <tr className="border-b-2 border-ink-200">
            <th className={th}>Claim</th>
            <th className={th}>Customer</th>
            <th className={th}>Received</th>
            <th className={th}>Status</th>
            <th className={th}>Complaint</th>
            <th className={`${th} text-right`}>Slabs</th>
            <th className={`${th} text-right`}>Heats</th>
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
                <ClaimStatusMark status={c.status} />
              </td>
              <td className="px-2 py-2.5">
                <div className="line-clamp-2 max-w-md">{c.defectComplained}</div>
                <div className="text-xs text-ink-600">
                  {c.productIds.length ? plural(c.productIds.length, "coil / plate", "coils / plates") : "no coil named"}
                  {c.quantityT !== null ? ` · ${withUnit(c.quantityT, "t", 1)}` : ""}
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
