import { useMemo, type ReactNode } from "react";
import { Trans, useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { Link } from "react-router";
import type { HeatHistory, HistorySection } from "@shared/api/claims";
import { CAUSE_CONFIDENCES, CLAIM_STATUSES, DISPOSITIONS, FACES, type CauseConfidence, type ClaimStatus } from "@shared/domain";
import type { ConditionSource } from "@shared/variables";
import { Fact } from "@/components/ui/card";
import { SeverityMark, SourceLegend, SourceMark, TransitionMark } from "@/components/ui/marks";
import { useTerms } from "@/i18n/terms";
import { count, date, dateTime, DASH, day, num, withUnit } from "@/lib/format";
import { ClaimStatusMark, listWords, SameHeatMark } from "./claim-marks";

/*
 * The pieces of a heat's history, shared by the trace screen and the printable history so both show
 * the same records as the workbook. Tables carry data-field cells for the browser tests.
 */

export type LiveCause = { tag: string; tagName: string; confidence: string };
/** The cause chips come from the causes feature; the route hands them in. */
export type RenderCauses = (causes: LiveCause[]) => ReactNode;

const link = "font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2";
// German headers are long single words ("Verwendungsentscheid"): they may break with a hyphen.
const th = "px-2 py-2 text-left text-xs font-semibold uppercase tracking-wide text-ink-600 hyphens-auto";
const td = "px-2 py-1.5 align-top";

/** A condition's name in the language shown (history.conditions.<key>); one the catalogue lacks keeps the server's words. */
const conditionLabel = (t: TFunction, key: string, label: string) => t(`history.conditions.${key}`, { defaultValue: label });
/** A cause's confidence in words (history.confidence.<code>); an unknown code shows as it is. */
const confidenceWords = (t: TFunction, c: string) => t(`history.confidence.${c}`, { defaultValue: c });

/** The address a printed page shows beside a link, so the paper still leads back to the record. */
export function PrintUrl({ path }: { path: string }) {
  return <span className="hidden break-all text-[10px] font-normal text-ink-600 print:inline"> ({new URL(path, window.location.origin).toString()})</span>;
}

export function HistoryFacts({ history }: { history: HeatHistory }) {
  const { t } = useTranslation("claims");
  const { term } = useTerms();
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
      <Fact label={t("history.facts.heat")} testId="fact-heat">
        {h.heatNo}
      </Fact>
      <Fact label={t("history.facts.sequence")}>
        {h.sequenceNo ? t("history.facts.sequenceValue", { sequence: h.sequenceNo, position: h.sequencePosition ?? "?" }) : DASH}
      </Fact>
      <Fact label={t("history.facts.grade")}>
        {h.grade}{" "}
        <span className="text-sm font-normal text-ink-700">
          {h.gradeName} · {h.family}
        </span>
      </Fact>
      <Fact label={t("history.facts.caster")}>{h.caster}</Fact>
      <Fact label={t("history.facts.castStart")}>{dateTime(h.castStart)}</Fact>
      <Fact label={t("history.facts.castEnd")}>{dateTime(h.castEnd)}</Fact>
      <Fact label={t("history.facts.ladleWeight")}>{withUnit(h.ladleWeightT, "t", 1)}</Fact>
      {/* Only what the document holds: a customer edition without its slabs says nothing of them. */}
      {on("slabs") && on("defects") ? (
        <Fact label={t("history.facts.slabsDefects")}>
          {history.slabs.length} · {history.defects.length}
        </Fact>
      ) : on("slabs") ? (
        <Fact label={t("history.facts.slabs")}>{history.slabs.length}</Fact>
      ) : on("defects") ? (
        <Fact label={t("history.facts.defects")}>{history.defects.length}</Fact>
      ) : null}
      {on("slabs") && on("dispositions") ? (
        <div className="col-span-2 md:col-span-4">
          <dt className="text-xs font-semibold uppercase tracking-wide text-ink-600">{t("history.facts.slabDispositions")}</dt>
          <dd className="mt-0.5 text-sm text-ink-900">
            {dispositions.length
              ? dispositions.map(([d, n]) => t("history.facts.dispositionCount", { disposition: term("dispositions", d), n: count(n) })).join(" · ")
              : t("history.facts.noDispositions")}
          </dd>
        </div>
      ) : null}
    </dl>
  );
}

/** Where a heat-level value came from, in words (history.sources: the heat record, computed from the chemistry…). */
const sourceWords = (t: TFunction, s: string | null) =>
  s ? t(`history.sources.${s.replace(/[ .]/g, "_")}`, { defaultValue: s.replace(/_/g, " ") }) : t("history.sources.none");

export function ConditionsTable({ history }: { history: HeatHistory }) {
  const { t } = useTranslation("claims");
  return (
    <table className="w-full text-sm" data-testid="history-conditions">
      <thead>
        <tr className="border-b-2 border-ink-200">
          <th className={th}>{t("history.conditionsTable.condition")}</th>
          <th className={`${th} text-right`}>{t("history.conditionsTable.value")}</th>
          <th className={th}>{t("history.conditionsTable.source")}</th>
        </tr>
      </thead>
      <tbody>
        {history.heat.conditions.map((c) => (
          <tr key={c.key} className="border-b border-ink-100" data-testid="condition-row" data-key={c.key}>
            <td className={td} data-field="label">
              {conditionLabel(t, c.key, c.label)}
            </td>
            <td className={`${td} text-right tabular-nums`} data-field="value">
              {withUnit(c.value, c.unit, c.unit === "m/min" ? 2 : c.unit === "mm" && c.key === "mold_level_sd_mm" ? 2 : 1)}
            </td>
            <td className={`${td} text-ink-700`} data-field="source">
              {sourceWords(t, c.source)}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

export function ChemistryTable({ history }: { history: HeatHistory }) {
  const { t } = useTranslation("claims");
  const shown = history.heat.chemistry.filter((c) => c.value !== null);
  if (!shown.length) return <p className="text-sm text-ink-600">{t("history.chemistry.none")}</p>;
  return (
    <table className="w-full text-sm" data-testid="history-chemistry">
      <thead>
        <tr className="border-b-2 border-ink-200">
          <th className={th}>{t("history.chemistry.element")}</th>
          <th className={`${th} text-right`}>{t("history.chemistry.content")}</th>
        </tr>
      </thead>
      <tbody>
        {shown.map((c) => (
          <tr key={c.key} className="border-b border-ink-100" data-testid="chemistry-row">
            <td className={td} data-field="element">
              {t(`history.elements.${c.key}`, { defaultValue: c.element })}
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

function TracedMark({ label }: { label: string }) {
  return (
    <span className="inline-flex items-center gap-1 whitespace-nowrap text-xs font-bold text-ember-700" data-testid="traced-mark">
      <svg viewBox="0 0 12 12" className="h-3 w-3 shrink-0" aria-hidden>
        <path d="M1 6h7M5.5 2.5 9 6l-3.5 3.5" fill="none" stroke="currentColor" strokeWidth="2" strokeLinecap="round" strokeLinejoin="round" />
      </svg>
      {label}
    </span>
  );
}

/** Every slab of the heat with its disposition; the traced one stands out by a word, an arrow and a border. */
export function SlabsTable({ history, traced }: { history: HeatHistory; traced?: string | null }) {
  const { t } = useTranslation("claims");
  const { term } = useTerms();
  const disposition = useMemo(() => listWords(term, "dispositions", DISPOSITIONS), [term]);
  if (!history.slabs.length) return <p className="text-sm text-ink-600">{t("history.slabs.none")}</p>;
  const cond = (s: HeatHistory["slabs"][number], key: string) => s.conditions.find((c) => c.key === key);
  const showDispositions = history.edition.sections.includes("dispositions");
  return (
    <div className="space-y-2">
      <div className="overflow-x-auto print:overflow-visible">
        <table className="w-full text-sm" data-testid="history-slabs">
          <thead>
            <tr className="border-b-2 border-ink-200">
              <th className={th}>{t("history.slabs.strandPiece")}</th>
              <th className={th}>{t("history.slabs.slab")}</th>
              <th className={`${th} text-right`}>{t("history.slabs.size")}</th>
              <th className={`${th} text-right`}>{t("history.slabs.weight")}</th>
              {showDispositions ? <th className={th}>{t("history.slabs.disposition")}</th> : null}
              <th className={`${th} text-right`}>{t("history.slabs.defects")}</th>
              <th className={th}>{t("history.slabs.products")}</th>
              {/* The two key conditions where there is room; each slab's full set is in its own table. */}
              <th className={`${th} hidden text-right xl:table-cell print:hidden`}>{t("history.slabs.speed")}</th>
              <th className={`${th} hidden text-right xl:table-cell print:hidden`}>{t("history.slabs.superheat")}</th>
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
                    <div className="whitespace-nowrap text-xs text-ink-600">{t("history.slabs.cast", { at: dateTime(s.castAt) })}</div>
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
                        <TracedMark label={t("history.slabs.traced")} />
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
                      {disposition(s.disposition)}
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

/** The causes as plain words, where no chips are handed in (the customer's edition). */
const plainCauses =
  (t: TFunction): RenderCauses =>
  (causes) =>
    causes.length ? (
      causes.map((c) => t("history.defects.cause", { cause: c.tagName, confidence: confidenceWords(t, c.confidence) })).join(", ")
    ) : (
      <span className="text-ink-600">{t("history.defects.noCause")}</span>
    );

/** The position line's key: with or without a measured size and a depth. */
const positionKey = (d: HeatHistory["defects"][number]) =>
  `history.defects.${d.lengthMm === null && d.widthMm === null ? "positionNoSize" : "position"}${d.depthMm !== null ? "Depth" : ""}`;

/** Every live defect of the heat with its photo thumbnails and causes. */
export function DefectsList({ history, traced, renderCauses }: { history: HeatHistory; traced?: string | null; renderCauses?: RenderCauses }) {
  const { t } = useTranslation("claims");
  const { term } = useTerms();
  const words = useMemo(
    () => ({
      face: listWords(term, "faces", FACES),
      disposition: listWords(term, "dispositions", DISPOSITIONS),
      tracedSlab: t("history.defects.tracedSlab"),
      causes: t("history.defects.causes"),
      openPhoto: t("history.defects.openPhoto"),
      noPhoto: t("history.defects.noPhoto"),
      plain: plainCauses(t),
    }),
    [t, term],
  );
  if (!history.defects.length) return <p className="text-sm text-ink-600">{t("history.defects.none")}</p>;
  const showCausesWith = renderCauses ?? words.plain;
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
                <Trans
                  t={t}
                  i18nKey="history.defects.onSlab"
                  values={{ slabId: d.slabId }}
                  components={{
                    1: forCustomer ? (
                      <span className="font-semibold" data-field="slabId" />
                    ) : (
                      <Link to={`/slabs/${encodeURIComponent(d.slabId)}`} className={link} data-field="slabId" />
                    ),
                  }}
                />
                {traced === d.slabId ? <span className="ml-1 text-xs font-bold text-ember-700">{words.tracedSlab}</span> : null}
              </span>
            </div>
            <p className="text-sm text-ink-800">
              {t(positionKey(d), {
                face: words.face(d.face),
                along: withUnit(d.positionAlongMm, "mm"),
                across: withUnit(d.positionAcrossMm, "mm"),
                length: withUnit(d.lengthMm, "mm"),
                width: withUnit(d.widthMm, "mm"),
                depth: withUnit(d.depthMm, "mm", 1),
              })}
            </p>
            <p className="text-sm text-ink-700">
              {t(d.loggedBy ? "history.defects.foundBy" : "history.defects.found", {
                stage: t(`history.defects.stages.${d.stage}`, { defaultValue: d.stage }),
                at: dateTime(d.foundAt),
                by: d.loggedBy,
              })}
              {showDispositions ? (
                <>
                  {" · "}
                  <Trans
                    t={t}
                    i18nKey="history.defects.disposition"
                    values={{ disposition: words.disposition(d.disposition) }}
                    components={{ 1: <span className="font-semibold text-ink-900" data-field="disposition" /> }}
                  />
                </>
              ) : null}
              {d.reviewStatus ? ` · ${t(`history.defects.review.${d.reviewStatus}`, { defaultValue: d.reviewStatus })}` : ""}
            </p>
            {d.note ? <p className="text-sm italic text-ink-700">“{d.note}”</p> : null}
            {showCauses ? (
              <div className="flex flex-wrap items-center gap-2 text-sm" data-field="causes">
                <span className="text-xs font-semibold uppercase text-ink-600">{words.causes}</span>
                {showCausesWith(causes.get(d.id) ?? [])}
              </div>
            ) : null}
          </div>
          {d.photos.length ? (
            <div className="flex flex-wrap items-start gap-2" data-testid="defect-photos">
              {d.photos.map((p, i) => {
                const img = (
                  <img
                    src={p.thumbUrl}
                    alt={t("history.defects.photoAlt", { n: i + 1, type: d.type, slabId: d.slabId })}
                    loading="lazy"
                    className="h-20 w-28 rounded object-cover print:h-24 print:w-32"
                  />
                );
                return forCustomer ? (
                  <span key={p.id} className="block rounded border border-ink-200">
                    {img}
                  </span>
                ) : (
                  <a key={p.id} href={p.url} target="_blank" rel="noreferrer" className="block rounded border border-ink-200" title={words.openPhoto}>
                    {img}
                  </a>
                );
              })}
            </div>
          ) : on("photos") ? (
            <span className="text-xs text-ink-500">{words.noPhoto}</span>
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
  const { t } = useTranslation("claims");
  const { term } = useTerms();
  const words = useMemo(
    () => ({
      relation: { thisHeat: t("history.related.thisHeat"), sameSequence: t("history.related.sameSequence") },
      claimStatus: listWords(term, "claimStatus", CLAIM_STATUSES),
    }),
    [t, term],
  );
  const claims = history.claims.filter((c) => c.id !== excludeClaimId);
  const other = excludeClaimId !== undefined;
  return (
    <div className="grid gap-5 xl:grid-cols-2 print:grid-cols-1">
      {show === "claims" ? null : (
        <section>
          {show === "both" ? (
            <h3 className="mb-2 text-sm font-bold text-ink-900">{t("history.related.investigations", { n: count(history.investigations.length) })}</h3>
          ) : null}
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
                    {history.edition.kind === "customer" ? null : <SameHeatMark sameHeat={i.sameHeat} words={words.relation} />}
                    <span className="text-ink-700">{term("investigationStatus", i.status)}</span>
                  </div>
                  <div className="text-ink-900">{i.title}</div>
                  <div className="text-xs text-ink-600">
                    {t("history.related.opened", { date: date(i.openedAt) })}
                    {i.closedAt ? ` · ${t("history.related.closed", { date: date(i.closedAt) })}` : ""}
                    {i.confirmedCause ? ` · ${t("history.related.confirmedCause", { cause: i.confirmedCause })}` : ""}
                    {i.owner ? ` · ${t("history.related.owner", { owner: i.owner })}` : ""}
                  </div>
                </li>
              ))}
            </ul>
          ) : (
            <p className="text-sm text-ink-600">{t("history.related.noInvestigation")}</p>
          )}
        </section>
      )}
      {show === "investigations" ? null : (
        <section>
          {show === "both" ? (
            <h3 className="mb-2 text-sm font-bold text-ink-900">
              {t(other ? "history.related.otherClaims" : "history.related.claims", { n: count(claims.length) })}
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
                    <SameHeatMark sameHeat={c.sameHeat} words={words.relation} />
                    {(CLAIM_STATUSES as readonly string[]).includes(c.status) ? (
                      <ClaimStatusMark status={c.status as ClaimStatus} label={words.claimStatus(c.status)} />
                    ) : (
                      <span>{c.status}</span>
                    )}
                  </div>
                  <div className="text-ink-900">
                    {c.customer} · {t("history.related.received", { day: day(c.receivedOn) })}
                    {c.quantityT !== null ? ` · ${withUnit(c.quantityT, "t", 2)}` : ""}
                  </div>
                  <div className="text-xs text-ink-600">
                    {c.defectComplained}
                    {c.slabs.length ? ` · ${t("history.related.slabsOfHeat", { slabs: c.slabs.join(", ") })}` : ""}
                  </div>
                </li>
              ))}
            </ul>
          ) : (
            <p className="text-sm text-ink-600">{t(other ? "history.related.noOtherClaim" : "history.related.noClaim")}</p>
          )}
        </section>
      )}
    </div>
  );
}

/** Each slab's own resolved conditions with where each came from (the workbook's conditions sheet). */
export function SlabConditionsTable({ history }: { history: HeatHistory }) {
  const { t } = useTranslation("claims");
  const keys = history.slabs[0]?.conditions.map((c) => c.key) ?? [];
  const labelOf = (k: string) => history.heat.conditions.find((c) => c.key === k);
  return (
    <div className="space-y-2">
      <table className="w-full text-sm" data-testid="history-slab-conditions">
        <thead>
          <tr className="border-b-2 border-ink-200">
            <th className={th}>{t("history.slabs.slab")}</th>
            {keys.map((k) => (
              <th key={k} className={`${th} text-right`}>
                {conditionLabel(t, k, labelOf(k)?.label ?? k)} {labelOf(k)?.unit ? `(${labelOf(k)!.unit})` : ""}
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
  const { t } = useTranslation("claims");
  // The confidence words once per table.
  const confidence = useMemo(() => new Map(CAUSE_CONFIDENCES.map((c) => [c, confidenceWords(t, c)])), [t]);
  if (!history.causes.length) return <p className="text-sm text-ink-600">{t("history.causes.none")}</p>;
  return (
    <table className="w-full text-sm" data-testid="history-causes">
      <thead>
        <tr className="border-b-2 border-ink-200">
          <th className={th}>{t("history.causes.defect")}</th>
          <th className={th}>{t("history.causes.slab")}</th>
          <th className={th}>{t("history.causes.cause")}</th>
          <th className={th}>{t("history.causes.confidence")}</th>
          <th className={th}>{t("history.causes.tagged")}</th>
          <th className={th}>{t("history.causes.removed")}</th>
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
            <td className={td}>{confidence.get(c.confidence as CauseConfidence) ?? c.confidence}</td>
            <td className={td}>
              {dateTime(c.at)}
              {c.by ? <div className="text-xs text-ink-600">{c.by}</div> : null}
            </td>
            <td className={td}>
              {c.removedAt ? (c.removedBy ? t("history.causes.removedBy", { at: dateTime(c.removedAt), by: c.removedBy }) : dateTime(c.removedAt)) : DASH}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

/** The record of changes, already in words from the server (who, when, what). */
export function AuditTable({ history }: { history: HeatHistory }) {
  const { t } = useTranslation("claims");
  if (!history.audit.length) return <p className="text-sm text-ink-600">{t("history.audit.none")}</p>;
  const withWho = history.edition.kind === "internal";
  const system = t("history.audit.system");
  return (
    <table className="w-full text-xs" data-testid="history-audit">
      <thead>
        <tr className="border-b-2 border-ink-200">
          <th className={th}>{t("history.audit.when")}</th>
          {withWho ? <th className={th}>{t("history.audit.who")}</th> : null}
          <th className={th}>{t("history.audit.what")}</th>
        </tr>
      </thead>
      <tbody>
        {history.audit.map((a, i) => (
          <tr key={i} className="border-b border-ink-100" data-testid="audit-row">
            <td className={`${td} whitespace-nowrap`}>{dateTime(a.at)}</td>
            {withWho ? <td className={td}>{a.by ?? system}</td> : null}
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
  const { t } = useTranslation("claims");
  if (!history.samples) return null;
  const { count: n, strands } = history.samples;
  const key = strands.length === 0 ? "history.samples.line" : strands.length === 1 ? "history.samples.lineStrand" : "history.samples.lineStrands";
  return (
    <p className="text-sm text-ink-800" data-testid="history-samples">
      {t(key, { count: n, n: count(n), strands: strands.join(", ") })}
    </p>
  );
}
