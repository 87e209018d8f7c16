import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import { Button } from "@/components/ui/button";
import { Notice } from "@/components/ui/notice";
import { ProgressBar } from "@/components/ui/progress";
import { bytes } from "@/lib/format";
import { useHistoryWorkbook, type HistoryEditionChoice } from "../api/claims.queries";

const secondaryLink =
  "inline-flex min-h-11 items-center justify-center gap-2 rounded-md border border-ink-300 bg-white px-4 text-sm font-semibold text-ink-900 hover:bg-ink-50";

/** "Export heat history (.xlsx)": the heat's workbook, with its progress while it downloads. */
export function HistoryWorkbookButton({
  heatNo,
  label,
  testId = "export-history",
  edition,
}: {
  heatNo: string;
  label?: string;
  testId?: string;
  /** The internal edition unless told otherwise. */
  edition?: HistoryEditionChoice;
}) {
  const { t } = useTranslation("claims");
  const exp = useHistoryWorkbook();
  return (
    <div className="flex min-w-52 flex-col gap-2 print:hidden">
      <Button variant="secondary" onClick={() => exp.mutate({ heatNo, edition })} disabled={exp.isPending} data-testid={testId}>
        <svg viewBox="0 0 16 16" className="h-4 w-4" aria-hidden>
          <path d="M8 2v8m-3.5-3.5L8 10l3.5-3.5M3 13h10" fill="none" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" strokeLinejoin="round" />
        </svg>
        {exp.isPending ? t("historyActions.preparing") : (label ?? t("historyActions.exportHistory"))}
      </Button>
      {exp.progress ? (
        <ProgressBar
          label={t("historyActions.downloading")}
          value={exp.progress.fraction}
          detail={exp.progress.loaded ? bytes(exp.progress.loaded) : t("historyActions.serverBuilding")}
        />
      ) : null}
      {exp.isError ? <Notice tone="error">{exp.error.message}</Notice> : null}
      {exp.isSuccess ? (
        <span className="text-xs text-ink-600" role="status" data-testid={`${testId}-done`}>
          {t("historyActions.savedAs", { name: exp.data.name, size: bytes(exp.data.size) })}
        </span>
      ) : null}
    </div>
  );
}

export function PrintableHistoryLink({
  heatNo,
  label,
  testId = "printable-history",
  claimId,
}: {
  heatNo: string;
  label?: string;
  testId?: string;
  /** From a claim: opens the customer edition with the claim's cover page. */
  claimId?: number;
}) {
  const { t } = useTranslation("claims");
  return (
    <Link
      to={`/heats/${encodeURIComponent(heatNo)}/history${claimId ? `?edition=customer&claim=${claimId}` : ""}`}
      className={`${secondaryLink} print:hidden`}
      data-testid={testId}
    >
      <svg viewBox="0 0 16 16" className="h-4 w-4" aria-hidden>
        <path d="M4 6V2h8v4M4 12H2V7h12v5h-2M4 10h8v4H4z" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinejoin="round" />
      </svg>
      {label ?? t("historyActions.printable")}
    </Link>
  );
}

export function TraceLink({ q, label, testId }: { q: string; label: string; testId?: string }) {
  return (
    <Link to={`/trace?q=${encodeURIComponent(q)}`} className={`${secondaryLink} print:hidden`} data-testid={testId}>
      {label}
    </Link>
  );
}
