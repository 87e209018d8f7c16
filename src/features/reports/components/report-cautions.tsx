/**
 * The cautions of every report screen (DOMAIN.md §7), one component so no screen leaves them out.
 * Reports show associations; what to do about one is the plant's procedure, not the chart's.
 *
 * Compact on the report screens: one line with the two that matter at every glance (association is
 * not cause; casting changes go through the plant's procedure), the four in full a tap away. The
 * reports home shows the four in full (`open`), once.
 */
export function ReportCautions({ open = false }: { open?: boolean }) {
  return (
    <aside aria-label="Cautions" data-testid="report-cautions" className="rounded-md border-l-4 border-ember-600 bg-ember-50 px-4 py-2 text-sm text-ink-900">
      <details open={open} className="group">
        <summary className="flex min-h-9 cursor-pointer list-none items-start gap-2 py-1 [&::-webkit-details-marker]:hidden">
          <span aria-hidden className="mt-0.5 flex h-5 w-5 shrink-0 items-center justify-center rounded-full border border-current text-xs font-bold">
            !
          </span>
          <span className="min-w-0 flex-1">
            <strong>Association is not causation.</strong> Compare within one grade family; a change of casting speed, brake current, SEN depth or superheat
            goes through the plant's change procedure (it can cause breakouts).{" "}
            <span className="whitespace-nowrap font-semibold text-strand-700 underline underline-offset-2 group-open:hidden">All four cautions</span>
            <span className="hidden whitespace-nowrap font-semibold text-strand-700 underline underline-offset-2 group-open:inline">Fewer words</span>
          </span>
        </summary>
        <ul className="mt-1 mb-1 list-disc space-y-1 pl-9" data-testid="report-cautions-full">
          <li>
            A rate that rises with a condition may owe it to something else that moves with it — above all the <strong>grade mix</strong>, which confounds
            almost everything (grades are cast at their own speeds, superheats and brake settings). Compare within one grade or family before drawing a
            conclusion; the adjusted answers take out only what their terms measure.
          </li>
          <li>
            Changing casting speed, brake current, SEN depth or superheat goes through the plant's own change procedure and its licensed metallurgists: such
            changes can cause breakouts. Defer to local codes and licensed practice.
          </li>
          <li>Dispositions and claims follow the plant's quality procedures and the customer's specification.</li>
          <li>Any follow-up inspection in the slab yard happens only where the site's hot-yard, crane and PPE rules allow.</li>
        </ul>
      </details>
    </aside>
  );
}
