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
  label = "Export heat history (.xlsx)",
  testId = "export-history",
  edition,
}: {
  heatNo: string;
  label?: string;
  testId?: string;
  /** The internal edition unless told otherwise. */
  edition?: HistoryEditionChoice;
}) {
  const exp = useHistoryWorkbook();
  return (
    <div className="flex min-w-52 flex-col gap-2 print:hidden">
      <Button variant="secondary" onClick={() => exp.mutate({ heatNo, edition })} disabled={exp.isPending} data-testid={testId}>
        <svg viewBox="0 0 16 16" className="h-4 w-4" aria-hidden>
          <path d="M8 2v8m-3.5-3.5L8 10l3.5-3.5M3 13h10" fill="none" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" strokeLinejoin="round" />
        </svg>
        {exp.isPending ? "Preparing the workbook…" : label}
      </Button>
      {exp.progress ? (
        <ProgressBar
          label="Downloading"
          value={exp.progress.fraction}
          detail={exp.progress.loaded ? bytes(exp.progress.loaded) : "the server is building it"}
        />
      ) : null}
      {exp.isError ? <Notice tone="error">{exp.error.message}</Notice> : null}
      {exp.isSuccess ? (
        <span className="text-xs text-ink-600" role="status" data-testid={`${testId}-done`}>
          Saved as {exp.data.name} ({bytes(exp.data.size)}).
        </span>
      ) : null}
    </div>
  );
}

export function PrintableHistoryLink({
  heatNo,
  label = "Printable history",
  testId = "printable-history",
  claimId,
}: {
  heatNo: string;
  label?: string;
  testId?: string;
  /** From a claim: opens the customer edition with the claim's cover page. */
  claimId?: number;
}) {
  return (
    <Link
      to={`/heats/${encodeURIComponent(heatNo)}/history${claimId ? `?edition=customer&claim=${claimId}` : ""}`}
      className={`${secondaryLink} print:hidden`}
      data-testid={testId}
    >
      <svg viewBox="0 0 16 16" className="h-4 w-4" aria-hidden>
        <path d="M4 6V2h8v4M4 12H2V7h12v5h-2M4 10h8v4H4z" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinejoin="round" />
      </svg>
      {label}
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
