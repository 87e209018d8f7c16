import { useQuery } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { Card, Stat } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { count, date, DASH, num, pct } from "@/lib/format";
import { plantKeys } from "../api/plant.queries";

const share = (a: number, n: number) => (n > 0 ? pct(a / n, 1) : DASH);

/** The last 30 days on record: slabs, affected share with its n, defects, the queue, top types. */
export function SummaryPanel() {
  const { t } = useTranslation("admin");
  const summary = useQuery(plantKeys.summary());
  if (summary.isPending) return <Spinner />;
  if (summary.isError) return <Notice tone="error">{summary.error.message}</Notice>;
  const { recent, totals } = summary.data;
  return (
    <Card title={t("summary.title", { from: date(recent.from), to: date(recent.to) })}>
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4">
        <Stat label={t("summary.slabsCast")} value={count(recent.slabs)} />
        <Stat
          label={t("summary.slabsWithDefect")}
          value={share(recent.affectedSlabs, recent.slabs)}
          note={t("summary.affectedOf", { affected: count(recent.affectedSlabs), n: count(recent.slabs) })}
        />
        <Stat label={t("summary.defectsLogged")} value={count(recent.defects)} />
        <Stat label={t("summary.awaitingReview")} value={count(recent.awaitingReview)} />
      </div>
      <h3 className="mt-5 text-sm font-semibold text-ink-800">{t("summary.topTypes")}</h3>
      <table className="mt-2 w-full text-sm">
        <thead>
          <tr className="border-b border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
            <th className="py-2">{t("summary.type")}</th>
            <th className="py-2 text-right">{t("summary.defects")}</th>
            <th className="py-2 text-right">{t("summary.per100")}</th>
          </tr>
        </thead>
        <tbody>
          {recent.topTypes.map((type) => (
            <tr key={type.code} className="border-b border-ink-100">
              <td className="py-2">
                <span className="font-semibold">{type.code}</span> {type.name}
              </td>
              <td className="py-2 text-right tabular-nums">{count(type.defects)}</td>
              <td className="py-2 text-right tabular-nums">{recent.slabs ? num((100 * type.defects) / recent.slabs, 2) : DASH}</td>
            </tr>
          ))}
        </tbody>
      </table>
      <p className="mt-3 text-xs text-ink-600">
        {t("summary.totals", { heats: count(totals.heats), slabs: count(totals.slabs), defects: count(totals.defects) })}
      </p>
    </Card>
  );
}
