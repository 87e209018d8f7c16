import { Link } from "react-router";
import type { InvestigationSummary } from "@shared/api/investigations";
import { date, DASH } from "@/lib/format";
import { InvestigationStatusMark, OverdueMark } from "./investigation-marks";

const th = "px-2 py-2 text-left text-xs font-semibold text-ink-700";

export function InvestigationsTable({ items, empty = "No investigation matches." }: { items: InvestigationSummary[]; empty?: string }) {
  if (items.length === 0)
    return (
      <p className="text-sm text-ink-600" data-testid="no-investigations">
        {empty}
      </p>
    );
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-sm" data-testid="investigations">
        <thead>
          <tr className="border-b-2 border-ink-200">
            <th className={th}>Investigation</th>
            <th className={th}>Status</th>
            <th className={th}>Owner</th>
            <th className={`${th} text-right`}>Subjects</th>
            <th className={`${th} text-right`}>Open actions</th>
            <th className={th}>Overdue</th>
            <th className={th}>Opened</th>
          </tr>
        </thead>
        <tbody>
          {items.map((i) => (
            <tr key={i.id} className="border-b border-ink-100 align-top" data-testid="investigation-row" data-ref={i.ref}>
              <td className="px-2 py-2">
                <Link
                  to={`/investigations/${i.id}`}
                  className="inline-flex min-h-11 flex-col justify-center font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2"
                  data-field="title"
                >
                  {i.title}
                </Link>
                <div className="text-xs text-ink-600">
                  {i.ref}
                  {i.confirmedCause ? ` · confirmed cause: ${i.confirmedCause.name}` : ""}
                </div>
              </td>
              <td className="px-2 py-2" data-field="status">
                <InvestigationStatusMark status={i.status} />
              </td>
              <td className="px-2 py-2" data-field="owner">
                {i.owner?.name ?? DASH}
              </td>
              <td className="px-2 py-2 text-right tabular-nums" data-field="subjects">
                {i.heats} {i.heats === 1 ? "heat" : "heats"}, {i.defects} {i.defects === 1 ? "defect" : "defects"}
              </td>
              <td className="px-2 py-2 text-right tabular-nums" data-field="open-actions">
                {i.actions.open} of {i.actions.total}
              </td>
              <td className="px-2 py-2" data-field="overdue">
                {i.actions.overdue > 0 ? <OverdueMark label={`${i.actions.overdue} overdue`} /> : <span className="text-ink-600">none</span>}
              </td>
              <td className="whitespace-nowrap px-2 py-2 tabular-nums">{date(i.openedAt)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
