import { Link } from "react-router";
import { useTranslation } from "react-i18next";
import type { InvestigationSummary } from "@shared/api/investigations";
import { count, date, DASH } from "@/lib/format";
import { InvestigationStatusMark, OverdueMark } from "./investigation-marks";

const th = "px-2 py-2 text-left text-xs font-semibold text-ink-700";

export function InvestigationsTable({ items, empty }: { items: InvestigationSummary[]; empty?: string }) {
  const { t } = useTranslation("process");
  if (items.length === 0)
    return (
      <p className="text-sm text-ink-600" data-testid="no-investigations">
        {empty ?? t("investigations.table.empty")}
      </p>
    );
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-sm" data-testid="investigations">
        <thead>
          <tr className="border-b-2 border-ink-200">
            <th className={th}>{t("investigations.table.investigation")}</th>
            <th className={th}>{t("investigations.table.status")}</th>
            <th className={th}>{t("investigations.table.owner")}</th>
            <th className={`${th} text-right`}>{t("investigations.table.subjects")}</th>
            <th className={`${th} text-right`}>{t("investigations.table.openActions")}</th>
            <th className={th}>{t("investigations.overdue")}</th>
            <th className={th}>{t("investigations.table.opened")}</th>
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
                  {i.confirmedCause ? t("investigations.table.confirmedCause", { name: i.confirmedCause.name }) : ""}
                </div>
              </td>
              <td className="px-2 py-2" data-field="status">
                <InvestigationStatusMark status={i.status} />
              </td>
              <td className="px-2 py-2" data-field="owner">
                {i.owner?.name ?? DASH}
              </td>
              <td className="px-2 py-2 text-right tabular-nums" data-field="subjects">
                {t("investigations.table.subjectCount", {
                  heats: t("investigations.heats", { count: i.heats, n: count(i.heats) }),
                  defects: t("investigations.defects", { count: i.defects, n: count(i.defects) }),
                })}
              </td>
              <td className="px-2 py-2 text-right tabular-nums" data-field="open-actions">
                {t("investigations.table.openOf", { open: count(i.actions.open), total: count(i.actions.total) })}
              </td>
              <td className="px-2 py-2" data-field="overdue">
                {i.actions.overdue > 0 ? (
                  <OverdueMark label={t("home.overdue", { n: count(i.actions.overdue) })} />
                ) : (
                  <span className="text-ink-600">{t("investigations.table.none")}</span>
                )}
              </td>
              <td className="whitespace-nowrap px-2 py-2 tabular-nums">{date(i.openedAt)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
