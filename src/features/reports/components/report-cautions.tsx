import { Trans, useTranslation } from "react-i18next";

/**
 * The cautions of every report screen (DOMAIN.md §7), one component so no screen leaves them out.
 * Reports show associations; what to do about one is the plant's procedure, not the chart's.
 *
 * Compact on the report screens: one line with the two that matter at every glance (association is
 * not cause; casting changes go through the plant's procedure), the four in full a tap away. The
 * reports home shows the four in full (`open`), once.
 */
export function ReportCautions({ open = false }: { open?: boolean }) {
  const { t } = useTranslation("reports");
  return (
    <aside
      aria-label={t("cautions.label")}
      data-testid="report-cautions"
      className="rounded-md border-l-4 border-ember-600 bg-ember-50 px-4 py-2 text-sm text-ink-900"
    >
      <details open={open} className="group">
        <summary className="flex min-h-9 cursor-pointer list-none items-start gap-2 py-1 [&::-webkit-details-marker]:hidden">
          <span aria-hidden className="mt-0.5 flex h-5 w-5 shrink-0 items-center justify-center rounded-full border border-current text-xs font-bold">
            !
          </span>
          <span className="min-w-0 flex-1">
            <Trans t={t} i18nKey="cautions.short" components={{ 1: <strong /> }} />{" "}
            <span className="whitespace-nowrap font-semibold text-strand-700 underline underline-offset-2 group-open:hidden">{t("cautions.all")}</span>
            <span className="hidden whitespace-nowrap font-semibold text-strand-700 underline underline-offset-2 group-open:inline">{t("cautions.fewer")}</span>
          </span>
        </summary>
        <ul className="mt-1 mb-1 list-disc space-y-1 pl-9" data-testid="report-cautions-full">
          <li>
            <Trans t={t} i18nKey="cautions.confounding" components={{ 1: <strong /> }} />
          </li>
          <li>{t("cautions.changes")}</li>
          <li>{t("cautions.dispositions")}</li>
          <li>{t("cautions.yard")}</li>
        </ul>
      </details>
    </aside>
  );
}
