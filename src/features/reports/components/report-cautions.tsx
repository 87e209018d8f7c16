/**
 * The cautions of every report screen (DOMAIN.md §7), one component so no screen leaves them out.
 * Reports show associations; what to do about one is the plant's procedure, not the chart's.
 */
export function ReportCautions() {
  return (
    <aside aria-label="Cautions" data-testid="report-cautions" className="rounded-md border-l-4 border-ember-600 bg-ember-50 px-4 py-3 text-sm text-ink-900">
      <p className="flex items-center gap-2 font-semibold">
        <span aria-hidden className="flex h-5 w-5 shrink-0 items-center justify-center rounded-full border border-current text-xs font-bold">
          !
        </span>
        Read these numbers with care
      </p>
      <ul className="mt-2 list-disc space-y-1 pl-9">
        <li>
          <strong>Association is not causation.</strong> A rate that rises with a condition may owe it to something else that moves with it —
          above all the <strong>grade mix</strong>, which confounds almost everything (grades are cast at their own speeds, superheats and
          brake settings). Compare within one grade or family before drawing a conclusion.
        </li>
        <li>
          Changing casting speed, brake current, SEN depth or superheat goes through the plant's own change procedure and its licensed
          metallurgists: such changes can cause breakouts. Defer to local codes and licensed practice.
        </li>
        <li>Dispositions and claims follow the plant's quality procedures and the customer's specification.</li>
        <li>Any follow-up inspection in the slab yard happens only where the site's hot-yard, crane and PPE rules allow.</li>
      </ul>
    </aside>
  );
}
