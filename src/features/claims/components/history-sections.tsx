import type { ReactNode } from "react";
import { Link } from "react-router";
import { CLAIM_STATUS_LABELS, type HeatHistory, type HistorySection } from "@shared/api/claims";
import { INVESTIGATION_STATUS_LABELS } from "@shared/api/investigations";
import type { ClaimStatus } from "@shared/domain";
import type { ConditionSource } from "@shared/variables";
import { Fact } from "@/components/ui/card";
import { SeverityMark, SourceLegend, SourceMark, TransitionMark } from "@/components/ui/marks";
import { date, dateTime, DASH, day, num, plural, withUnit } from "@/lib/format";
import { dispositionLabel, faceLabel, reviewLabel, stageLabel } from "@/lib/labels";
import { ClaimStatusMark, SameHeatMark } from "./claim-marks";

/*
 * The pieces of a heat's history, shared by the trace screen and the printable history so both show
 * the same records as the workbook. Tables carry data-field cells for the browser tests.
 */

export type LiveCause = { tag: string; tagName: string; confidence: string };
/** The cause chips come from the causes feature; the route hands them in. */
export type RenderCauses = (causes: LiveCause[]) => ReactNode;

const link = "font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2";
const th = "px-2 py-2 text-left text-xs font-semibold uppercase tracking-wide text-ink-600";
const td = "px-2 py-1.5 align-top";

/** The address a printed page shows beside a link, so the paper still leads back to the record. */
export function PrintUrl({ path }: { path: string }) {
  return <span className="hidden break-all text-[10px] font-normal text-ink-600 print:inline"> ({new URL(path, window.location.origin).toString()})</span>;
}

export function HistoryFacts({ history }: { history: HeatHistory }) {
  const h = history.heat;
  const on = (x: HistorySection) => history.edition.sections.includes(x);
  const dispositions = Object.entries(
    history.slabs.reduce<Record<string, number>>((m, s) => {
      if (s.disposition) m[s.disposition] = (m[s.disposition] ?? 0) + 1;
      return m;
    }, {}),
  );
  return (
    <dl className="grid grid-cols-2 gap-x-6 gap-y-3 md:grid-cols-4" data-testid="history-facts">
      <Fact label="Heat" testId="fact-heat">
        {h.heatNo}
      </Fact>
      <Fact label="Sequence">{h.sequenceNo ? `${h.sequenceNo} (heat ${h.sequencePosition ?? "?"})` : DASH}</Fact>
      <Fact label="Grade">
        {h.grade}{" "}
        <span className="text-sm font-normal text-ink-700">
          {h.gradeName} · {h.family}
        </span>
      </Fact>
      <Fact label="Caster">{h.caster}</Fact>
      <Fact label="Cast start">{dateTime(h.castStart)}</Fact>
      <Fact label="Cast end">{dateTime(h.castEnd)}</Fact>
      <Fact label="Ladle weight">{withUnit(h.ladleWeightT, "t", 1)}</Fact>
      {/* Only what the document holds: a customer edition without its slabs says nothing of them. */}
      {on("slabs") && on("defects") ? (
        <Fact label="Slabs · defects">
          {history.slabs.length} · {history.defects.length}
        </Fact>
      ) : on("slabs") ? (
        <Fact label="Slabs">{history.slabs.length}</Fact>
      ) : on("defects") ? (
        <Fact label="Defects">{history.defects.length}</Fact>
      ) : null}
      {on("slabs") && on("dispositions") ? (
        <div className="col-span-2 md:col-span-4">
          <dt className="text-xs font-semibold uppercase tracking-wide text-ink-600">Slab dispositions</dt>
          <dd className="mt-0.5 text-sm text-ink-900">
            {dispositions.length ? dispositions.map(([d, n]) => `${dispositionLabel(d)}: ${n}`).join(" · ") : "none recorded"}
          </dd>
        </div>
      ) : null}
    </dl>
  );
}

/** Where a heat-level value came from, in words (the heat record, computed from the chemistry…). */
const sourceWords = (s: string | null) => (s ? s.replace(/_/g, " ") : "no value");

export function ConditionsTable({ history }: { history: HeatHistory }) {
  return (
    <table className="w-full text-sm" data-testid="history-conditions">
      <thead>
        <tr className="border-b-2 border-ink-200">
          <th className={th}>Condition</th>
          <th className={`${th} text-right`}>Value</th>
          <th className={th}>Source</th>
        </tr>
      </thead>
      <tbody>
        {history.heat.conditions.map((c) => (
          <tr key={c.key} className="border-b border-ink-100" data-testid="condition-row" data-key={c.key}>
            <td className={td} data-field="label">
              {c.label}
            </td>
            <td className={`${td} text-right tabular-nums`} data-field="value">
              {withUnit(c.value, c.unit, c.unit === "m/min" ? 2 : c.unit === "mm" && c.key === "mold_level_sd_mm" ? 2 : 1)}
            </td>
            <td className={`${td} text-ink-700`} data-field="source">
              {sourceWords(c.source)}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

export function ChemistryTable({ history }: { history: HeatHistory }) {
  const shown = history.heat.chemistry.filter((c) => c.value !== null);
  if (!shown.length) return <p className="text-sm text-ink-600">No heat analysis on record.</p>;
  return (
    <table className="w-full text-sm" data-testid="history-chemistry">
      <thead>
        <tr className="border-b-2 border-ink-200">
          <th className={th}>Element</th>
          <th className={`${th} text-right`}>Content</th>
        </tr>
      </thead>
      <tbody>
        {shown.map((c) => (
          <tr key={c.key} className="border-b border-ink-100" data-testid="chemistry-row">
            <td className={td} data-field="element">
              {c.element}
            </td>
            <td className={`${td} text-right tabular-nums`} data-field="value">
              {withUnit(c.value, c.unit, c.unit === "ppm" ? 0 : 4)}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

function TracedMark() {
  return (
    <span className="inline-flex items-center gap-1 whitespace-nowrap text-xs font-bold text-ember-700" data-testid="traced-mark">
      <svg viewBox="0 0 12 12" className="h-3 w-3 shrink-0" aria-hidden>
        <path d="M1 6h7M5.5 2.5 9 6l-3.5 3.5" fill="none" stroke="currentColor" strokeWidth="2" strokeLinecap="round" strokeLinejoin="round" />
      </svg>
      traced slab
    </span>
  );
}

/** Every slab of the heat with its disposition; the traced one stands out by a word, an arrow and a border. */
export function SlabsTable({ history, traced }: { history: HeatHistory; traced?: string | null }) {
  if (!history.slabs.length) return <p className="text-sm text-ink-600">No slabs on record for this heat.</p>;
  const cond = (s: HeatHistory["slabs"][number], key: string) => s.conditions.find((c) => c.key === key);
  const showDispositions = history.edition.sections.includes("dispositions");
  return (
    <div className="space-y-2">
      <div className="overflow-x-auto print:overflow-visible">
        <table className="w-full text-sm" data-testid="history-slabs">
          <thead>
            <tr className="border-b-2 border-ink-200">
              <th className={th}>Strand · piece</th>
              <th className={th}>Slab</th>
              <th className={`${th} text-right`}>T × W × L mm</th>
              <th className={`${th} text-right`}>Weight t</th>
              {showDispositions ? <th className={th}>Disposition</th> : null}
              <th className={`${th} text-right`}>Defects</th>
              <th className={th}>Coils / plates</th>
              {/* The two key conditions where there is room; each slab's full set is in its own table. */}
              <th className={`${th} hidden text-right xl:table-cell print:hidden`}>Speed m/min</th>
              <th className={`${th} hidden text-right xl:table-cell print:hidden`}>Superheat °C</th>
            </tr>
          </thead>
          <tbody>
            {history.slabs.map((s) => {
              const isTraced = traced === s.slabId;
              const speed = cond(s, "casting_speed_m_min");
              const superheat = cond(s, "superheat_c");
              return (
                <tr
                  key={s.slabId}
                  className={`border-b border-ink-100 ${isTraced ? "border-l-4 border-l-ember-600 bg-ember-50" : ""}`}
                  data-testid="history-slab-row"
                  data-slab={s.slabId}
                  data-traced={isTraced ? "true" : undefined}
                >
                  <td className={td}>
                    <span className="whitespace-nowrap tabular-nums">
                      {s.strand} · {s.pieceNo}
                    </span>
                    <div className="whitespace-nowrap text-xs text-ink-600">cast {dateTime(s.castAt)}</div>
                  </td>
                  <td className={td}>
                    {history.edition.kind === "customer" ? (
                      <span className="whitespace-nowrap font-semibold" data-field="slabId">
                        {s.slabId}
                      </span>
                    ) : (
                      <Link
                        to={`/slabs/${encodeURIComponent(s.slabId)}`}
                        className={`${link} inline-flex min-h-11 items-center whitespace-nowrap print:min-h-0`}
                        data-field="slabId"
                      >
                        {s.slabId}
                      </Link>
                    )}
                    {isTraced ? (
                      <div>
                        <TracedMark />
                      </div>
                    ) : null}
                    {s.transition ? (
                      <div>
                        <TransitionMark transition />
                      </div>
                    ) : null}
                  </td>
                  <td className={`${td} whitespace-nowrap text-right tabular-nums`}>
                    {num(s.thicknessMm)}×{num(s.widthMm)}×{num(s.lengthMm)}
                  </td>
                  <td className={`${td} text-right tabular-nums`} data-field="weightT">
                    {num(s.weightT, 2)}
                  </td>
                  {showDispositions ? (
                    <td className={td} data-field="disposition">
                      {dispositionLabel(s.disposition)}
                    </td>
                  ) : null}
                  <td className={`${td} text-right tabular-nums ${s.defects ? "font-semibold" : "text-ink-500"}`} data-field="defects">
                    {s.defects}
                  </td>
                  <td className={`${td} font-mono text-xs`} data-field="products">
                    {s.products.join(", ") || DASH}
                  </td>
                  <td className={`${td} hidden text-right xl:table-cell print:hidden`}>
                    <span className="inline-flex flex-col items-end leading-tight">
                      <span className="tabular-nums">{num(speed?.value, 2)}</span>
                      <SourceMark source={(speed?.source ?? null) as ConditionSource | null} />
                    </span>
                  </td>
                  <td className={`${td} hidden text-right xl:table-cell print:hidden`}>
                    <span className="inline-flex flex-col items-end leading-tight">
                      <span className="tabular-nums">{num(superheat?.value, 1)}</span>
                      <SourceMark source={(superheat?.source ?? null) as ConditionSource | null} />
                    </span>
                  </td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
      <div className="hidden xl:block print:hidden">
        <SourceLegend />
      </div>
    </div>
  );
}

/** The live causes of each defect, from the history's cause records. */
export function liveCauses(history: HeatHistory): Map<number, LiveCause[]> {
  const out = new Map<number, LiveCause[]>();
  for (const c of history.causes) {
    if (c.removedAt) continue;
    out.set(c.defectId, [...(out.get(c.defectId) ?? []), { tag: c.tag, tagName: c.tagName, confidence: c.confidence }]);
  }
  return out;
}

const plainCauses: RenderCauses = (causes) =>
  causes.length ? causes.map((c) => `${c.tagName} (${c.confidence})`).join(", ") : <span className="text-ink-600">no cause tagged</span>;

/** Every live defect of the heat with its photo thumbnails and causes. */
export function DefectsList({ history, traced, renderCauses = plainCauses }: { history: HeatHistory; traced?: string | null; renderCauses?: RenderCauses }) {
  if (!history.defects.length) return <p className="text-sm text-ink-600">No defect on record for this heat.</p>;
  const causes = liveCauses(history);
  const on = (x: HistorySection) => history.edition.sections.includes(x);
  const showDispositions = on("dispositions");
  const showCauses = on("causes");
  // The customer edition leads nowhere into the application: the reader has no account.
  const forCustomer = history.edition.kind === "customer";
  return (
    <ul className="divide-y divide-ink-100" data-testid="history-defects">
      {history.defects.map((d) => (
        <li
          key={d.id}
          className="grid gap-3 py-3 break-inside-avoid md:grid-cols-[1fr_auto]"
          data-testid="history-defect"
          data-defect-id={d.id}
          data-slab={d.slabId}
        >
          <div className="min-w-0 space-y-1">
            <div className="flex flex-wrap items-center gap-x-3 gap-y-1">
              <span className="font-bold" data-field="type">
                {d.type} <span className="font-semibold text-ink-800">{d.typeName}</span>
              </span>
              <SeverityMark severity={d.severity} />
              <span className="text-sm">
                on slab{" "}
                {forCustomer ? (
                  <span className="font-semibold" data-field="slabId">
                    {d.slabId}
                  </span>
                ) : (
                  <Link to={`/slabs/${encodeURIComponent(d.slabId)}`} className={link} data-field="slabId">
                    {d.slabId}
                  </Link>
                )}
                {traced === d.slabId ? <span className="ml-1 text-xs font-bold text-ember-700">(the traced slab)</span> : null}
              </span>
            </div>
            <p className="text-sm text-ink-800">
              {faceLabel(d.face)}, {withUnit(d.positionAlongMm, "mm")} from the head end, {withUnit(d.positionAcrossMm, "mm")} across ·{" "}
              {d.lengthMm === null && d.widthMm === null ? "size not measured" : `${withUnit(d.lengthMm, "mm")} × ${withUnit(d.widthMm, "mm")}`}
              {d.depthMm !== null ? `, ${withUnit(d.depthMm, "mm", 1)} deep` : ""}
            </p>
            <p className="text-sm text-ink-700">
              Found at {stageLabel(d.stage).toLowerCase()} {dateTime(d.foundAt)}
              {d.loggedBy ? ` by ${d.loggedBy}` : ""}
              {showDispositions ? (
                <>
                  {" "}
                  · disposition{" "}
                  <span className="font-semibold text-ink-900" data-field="disposition">
                    {dispositionLabel(d.disposition)}
                  </span>
                </>
              ) : null}
              {d.reviewStatus ? ` · ${reviewLabel(d.reviewStatus).toLowerCase()}` : ""}
            </p>
            {d.note ? <p className="text-sm italic text-ink-700">“{d.note}”</p> : null}
            {showCauses ? (
              <div className="flex flex-wrap items-center gap-2 text-sm" data-field="causes">
                <span className="text-xs font-semibold uppercase text-ink-600">Causes</span>
                {renderCauses(causes.get(d.id) ?? [])}
              </div>
            ) : null}
          </div>
          {d.photos.length ? (
            <div className="flex flex-wrap items-start gap-2" data-testid="defect-photos">
              {d.photos.map((p, i) => {
                const img = (
                  <img
                    src={p.thumbUrl}
                    alt={`Photo ${i + 1} of defect ${d.type} on slab ${d.slabId}`}
                    loading="lazy"
                    className="h-20 w-28 rounded object-cover print:h-24 print:w-32"
                  />
                );
                return forCustomer ? (
                  <span key={p.id} className="block rounded border border-ink-200">
                    {img}
                  </span>
                ) : (
                  <a key={p.id} href={p.url} target="_blank" rel="noreferrer" className="block rounded border border-ink-200" title="Open the photo">
                    {img}
                  </a>
                );
              })}
            </div>
          ) : on("photos") ? (
            <span className="text-xs text-ink-500">no photo</span>
          ) : null}
        </li>
      ))}
    </ul>
  );
}

/** Investigations and claims on this heat or another heat of its sequence, each saying which. */
export function RelatedRecords({
  history,
  excludeClaimId,
  show = "both",
}: {
  history: HeatHistory;
  excludeClaimId?: number;
  show?: "both" | "investigations" | "claims";
}) {
  const claims = history.claims.filter((c) => c.id !== excludeClaimId);
  return (
    <div className="grid gap-5 xl:grid-cols-2 print:grid-cols-1">
      {show === "claims" ? null : (
        <section>
          {show === "both" ? <h3 className="mb-2 text-sm font-bold text-ink-900">Investigations ({history.investigations.length})</h3> : null}
          {history.investigations.length ? (
            <ul className="space-y-2" data-testid="history-investigations">
              {history.investigations.map((i) => (
                <li
                  key={i.id}
                  className="rounded-md border border-ink-200 px-3 py-2 text-sm break-inside-avoid"
                  data-testid="history-investigation"
                  data-ref={i.ref}
                >
                  <div className="flex flex-wrap items-center gap-x-3 gap-y-1">
                    {history.edition.kind === "customer" ? (
                      <span className="font-semibold">{i.ref}</span>
                    ) : (
                      <Link to={`/investigations/${i.id}`} className={link}>
                        {i.ref}
                      </Link>
                    )}
                    {history.edition.kind === "customer" ? null : <SameHeatMark sameHeat={i.sameHeat} />}
                    <span className="text-ink-700">{INVESTIGATION_STATUS_LABELS[i.status as keyof typeof INVESTIGATION_STATUS_LABELS] ?? i.status}</span>
                  </div>
                  <div className="text-ink-900">{i.title}</div>
                  <div className="text-xs text-ink-600">
                    opened {date(i.openedAt)}
                    {i.closedAt ? ` · closed ${date(i.closedAt)}` : ""}
                    {i.confirmedCause ? ` · confirmed cause: ${i.confirmedCause}` : ""}
                    {i.owner ? ` · owner ${i.owner}` : ""}
                  </div>
                </li>
              ))}
            </ul>
          ) : (
            <p className="text-sm text-ink-600">No investigation looks at this heat or its sequence.</p>
          )}
        </section>
      )}
      {show === "investigations" ? null : (
        <section>
          {show === "both" ? (
            <h3 className="mb-2 text-sm font-bold text-ink-900">
              {excludeClaimId !== undefined ? "Other claims" : "Claims"} ({claims.length})
            </h3>
          ) : null}
          {claims.length ? (
            <ul className="space-y-2" data-testid="history-claims">
              {claims.map((c) => (
                <li
                  key={c.id}
                  className="rounded-md border border-ink-200 px-3 py-2 text-sm break-inside-avoid"
                  data-testid="history-claim"
                  data-claim-no={c.claimNo}
                >
                  <div className="flex flex-wrap items-center gap-x-3 gap-y-1">
                    <Link to={`/claims/${c.id}`} className={link}>
                      {c.claimNo}
                    </Link>
                    <SameHeatMark sameHeat={c.sameHeat} />
                    {c.status in CLAIM_STATUS_LABELS ? <ClaimStatusMark status={c.status as ClaimStatus} /> : <span>{c.status}</span>}
                  </div>
                  <div className="text-ink-900">
                    {c.customer} · received {day(c.receivedOn)}
                    {c.quantityT !== null ? ` · ${withUnit(c.quantityT, "t", 1)}` : ""}
                  </div>
                  <div className="text-xs text-ink-600">
                    {c.defectComplained}
                    {c.slabs.length ? ` · slabs of this heat: ${c.slabs.join(", ")}` : ""}
                  </div>
                </li>
              ))}
            </ul>
          ) : (
            <p className="text-sm text-ink-600">No {excludeClaimId !== undefined ? "other " : ""}claim on this heat or its sequence.</p>
          )}
        </section>
      )}
    </div>
  );
}

/** Each slab's own resolved conditions with where each came from (the workbook's conditions sheet). */
export function SlabConditionsTable({ history }: { history: HeatHistory }) {
  const keys = history.slabs[0]?.conditions.map((c) => c.key) ?? [];
  const labelOf = (k: string) => history.heat.conditions.find((c) => c.key === k);
  return (
    <div className="space-y-2">
      <table className="w-full text-sm" data-testid="history-slab-conditions">
        <thead>
          <tr className="border-b-2 border-ink-200">
            <th className={th}>Slab</th>
            {keys.map((k) => (
              <th key={k} className={`${th} text-right`}>
                {labelOf(k)?.label ?? k} {labelOf(k)?.unit ? `(${labelOf(k)!.unit})` : ""}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {history.slabs.map((s) => (
            <tr key={s.slabId} className="border-b border-ink-100">
              <td className={`${td} whitespace-nowrap font-semibold`}>{s.slabId}</td>
              {s.conditions.map((c) => (
                <td key={c.key} className={`${td} text-right`}>
                  <span className="inline-flex flex-col items-end leading-tight">
                    <span className="tabular-nums">{num(c.value, c.key === "casting_speed_m_min" || c.key === "mold_level_sd_mm" ? 2 : 1)}</span>
                    <SourceMark source={c.source as ConditionSource | null} />
                  </span>
                </td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
      <SourceLegend />
    </div>
  );
}

export function CausesTable({ history }: { history: HeatHistory }) {
  if (!history.causes.length) return <p className="text-sm text-ink-600">No cause tagged on this heat's defects.</p>;
  return (
    <table className="w-full text-sm" data-testid="history-causes">
      <thead>
        <tr className="border-b-2 border-ink-200">
          <th className={th}>Defect</th>
          <th className={th}>Slab</th>
          <th className={th}>Cause</th>
          <th className={th}>Confidence</th>
          <th className={th}>Tagged</th>
          <th className={th}>Removed</th>
        </tr>
      </thead>
      <tbody>
        {history.causes.map((c, i) => (
          <tr key={i} className="border-b border-ink-100">
            <td className={td}>{c.defectId}</td>
            <td className={`${td} whitespace-nowrap`}>{c.slabId}</td>
            <td className={td}>
              <span className="font-semibold">{c.tagName}</span>
              {c.note ? <div className="text-xs text-ink-600">{c.note}</div> : null}
            </td>
            <td className={td}>{c.confidence}</td>
            <td className={td}>
              {dateTime(c.at)}
              {c.by ? <div className="text-xs text-ink-600">{c.by}</div> : null}
            </td>
            <td className={td}>{c.removedAt ? `${dateTime(c.removedAt)}${c.removedBy ? ` by ${c.removedBy}` : ""}` : DASH}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

/** The record of changes, already in words from the server (who, when, what). */
export function AuditTable({ history }: { history: HeatHistory }) {
  if (!history.audit.length) return <p className="text-sm text-ink-600">Nothing recorded.</p>;
  const withWho = history.edition.kind === "internal";
  return (
    <table className="w-full text-xs" data-testid="history-audit">
      <thead>
        <tr className="border-b-2 border-ink-200">
          <th className={th}>When</th>
          {withWho ? <th className={th}>Who</th> : null}
          <th className={th}>What</th>
        </tr>
      </thead>
      <tbody>
        {history.audit.map((a, i) => (
          <tr key={i} className="border-b border-ink-100" data-testid="audit-row">
            <td className={`${td} whitespace-nowrap`}>{dateTime(a.at)}</td>
            {withWho ? <td className={td}>{a.by ?? "the system"}</td> : null}
            <td className={`${td} break-words`} data-field="what">
              {a.what}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

export function SamplesLine({ history }: { history: HeatHistory }) {
  if (!history.samples) return null;
  return (
    <p className="text-sm text-ink-800" data-testid="history-samples">
      {plural(history.samples.count, "process sample")} in the cast window
      {history.samples.strands.length ? ` on strand${history.samples.strands.length === 1 ? "" : "s"} ${history.samples.strands.join(", ")}` : ""}; the workbook
      lists them one by one.
    </p>
  );
}
