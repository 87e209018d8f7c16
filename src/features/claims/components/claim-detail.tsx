import { useMemo, useState } from "react";
import { Trans, useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { Link } from "react-router";
import { z } from "zod";
import type { Claim } from "@shared/api/claims";
import { CLAIM_STATUSES, DISPOSITIONS } from "@shared/domain";
import { AttachmentsCard } from "@/components/attachments-card";
import { MutationError, TextAreaField, useAddRow } from "@/components/mutation-form";
import { Button } from "@/components/ui/button";
import { Card } from "@/components/ui/card";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { useTerms } from "@/i18n/terms";
import { count, date, dateTime, day, DASH, withUnit } from "@/lib/format";
import { useClaimChange, useSendHistory, useUploadClaimAttachments } from "../api/claims.queries";
import { ClaimStatusMark, listWords } from "./claim-marks";
import { CUSTOMER_DEFAULT, EditionChooser, type EditionValue } from "./edition-chooser";
import { HistoryWorkbookButton, PrintableHistoryLink, TraceLink } from "./history-actions";
import { idList } from "./new-claim-form";

const link = "font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2";
// German headers are long single words ("Verwendungsentscheid"): they may break with a hyphen.
const th = "px-2 py-2 text-left text-xs font-semibold uppercase tracking-wide text-ink-600 hyphens-auto";
const areaClass = "w-full rounded-md border border-ink-300 bg-white px-3 py-2 text-sm text-ink-900";

/** One term and its value: the <div> sits directly in the <dl> (a wide one spans the row through className). */
function Item({ label, children, testId, className }: { label: string; children: React.ReactNode; testId?: string; className?: string }) {
  return (
    <div className={className}>
      <dt className="text-xs font-semibold uppercase tracking-wide text-ink-600">{label}</dt>
      <dd className="mt-0.5 text-sm text-ink-900" data-testid={testId}>
        {children}
      </dd>
    </div>
  );
}

/** The coil / plate ids the rolling-mill trace does not know: kept on the claim, flagged until they are traced. */
export function UntracedFlag({ claim }: { claim: Claim }) {
  const { t } = useTranslation("claims");
  if (!claim.untracedProducts.length) return null;
  // The ids as one element inside the sentence: the translation places it, the ids stay as they are.
  const ids = (
    <span>
      {claim.untracedProducts.map((p, i) => (
        <span key={p}>
          {i ? ", " : ""}
          <strong data-testid="untraced-id">{p}</strong>
        </span>
      ))}
    </span>
  );
  return (
    <div data-testid="untraced">
      <Notice tone="caution" title={t("untraced.title", { n: count(claim.untracedProducts.length) })}>
        <Trans t={t} i18nKey="untraced.text" components={{ 1: ids }} />
      </Notice>
    </div>
  );
}

export function ClaimSummaryCard({ claim, canManage }: { claim: Claim; canManage: boolean }) {
  const { t } = useTranslation("claims");
  const { term } = useTerms();
  const notTraced = t("summary.notTraced");
  const change = useClaimChange(claim.id);
  const [notes, setNotes] = useState(claim.notes ?? "");
  const notesChanged = notes.trim() !== (claim.notes ?? "").trim();
  return (
    <Card>
      <div className="grid gap-5 xl:grid-cols-[3fr_2fr]">
        <dl className="grid grid-cols-2 gap-x-6 gap-y-3 md:grid-cols-3">
          <Item label={t("summary.customer")} testId="claim-customer">
            {claim.customer}
          </Item>
          <Item label={t("summary.received")}>{day(claim.receivedOn)}</Item>
          <Item label={t("summary.quantity")}>{withUnit(claim.quantityT, "t", 2)}</Item>
          <Item label={t("summary.defectComplained")} testId="claim-complaint" className="col-span-2 md:col-span-3">
            {claim.defectComplained}
          </Item>
          <Item label={t("summary.products")} testId="claim-products" className="col-span-2 md:col-span-3">
            {claim.productIds.length ? (
              <span className="flex flex-wrap gap-1.5">
                {claim.productIds.map((p) => {
                  const untraced = claim.untracedProducts.includes(p);
                  return (
                    <span
                      key={p}
                      className={`inline-flex min-h-8 items-center gap-1 rounded-md border px-2 font-mono text-sm ${untraced ? "border-dashed border-ember-600 bg-ember-50" : "border-ink-300 bg-ink-50"}`}
                      data-testid="claim-product"
                      data-untraced={untraced ? "true" : "false"}
                    >
                      {p}
                      {untraced ? <span className="font-sans text-xs font-bold text-ember-700">{notTraced}</span> : null}
                    </span>
                  );
                })}
              </span>
            ) : (
              t("summary.noProducts")
            )}
          </Item>
          <Item label={t("summary.recorded")}>
            {dateTime(claim.createdAt)}
            {claim.createdBy ? <div className="text-xs text-ink-600">{t("summary.recordedBy", { name: claim.createdBy.name })}</div> : null}
          </Item>
          <Item label={t("summary.slabsHeats")}>
            {claim.slabs} · {claim.heats.length}
          </Item>
        </dl>
        <div className="space-y-4">
          <div>
            <div className="text-xs font-semibold uppercase tracking-wide text-ink-600">{t("summary.status")}</div>
            <div className="mt-1">
              <ClaimStatusMark status={claim.status} label={term("claimStatus", claim.status)} />
            </div>
            {canManage ? (
              <fieldset className="mt-2">
                <legend className="sr-only">{t("summary.changeStatus")}</legend>
                <div className="flex flex-wrap gap-2" role="radiogroup" aria-label={t("summary.changeStatus")}>
                  {CLAIM_STATUSES.map((s) => {
                    const on = claim.status === s;
                    return (
                      <button
                        key={s}
                        type="button"
                        role="radio"
                        aria-checked={on}
                        disabled={change.isPending}
                        onClick={() => (on ? undefined : change.mutate({ method: "PATCH", body: { status: s } }))}
                        className={`min-h-11 rounded-md border-2 px-3 text-sm font-semibold ${on ? "border-strand-700 bg-strand-50 text-ink-900" : "border-ink-200 bg-white text-ink-700 hover:border-ink-400"}`}
                        data-testid={`status-${s}`}
                      >
                        {term("claimStatus", s)}
                      </button>
                    );
                  })}
                </div>
              </fieldset>
            ) : null}
          </div>
          <div>
            {canManage ? (
              <form
                aria-label={t("summary.notes")}
                className="space-y-2"
                onSubmit={(e) => {
                  e.preventDefault();
                  change.mutate({ method: "PATCH", body: { notes: notes.trim() || null } });
                }}
              >
                <label htmlFor="claim-notes-edit" className="text-xs font-semibold uppercase tracking-wide text-ink-600">
                  {t("summary.notes")}
                </label>
                <textarea id="claim-notes-edit" rows={4} maxLength={5000} value={notes} onChange={(e) => setNotes(e.target.value)} className={areaClass} />
                <Button type="submit" variant="secondary" disabled={!notesChanged || change.isPending}>
                  {change.isPending ? t("summary.saving") : t("summary.saveNotes")}
                </Button>
              </form>
            ) : (
              <Item label={t("summary.notes")} testId="claim-notes">
                <span className="whitespace-pre-line">{claim.notes || DASH}</span>
              </Item>
            )}
          </div>
          <MutationError mutation={change} />
        </div>
      </div>
    </Card>
  );
}

export function LinkedSlabsCard({ claim, canManage }: { claim: Claim; canManage: boolean }) {
  const { t } = useTranslation("claims");
  const { term } = useTerms();
  const change = useClaimChange(claim.id);
  const add = useAddRow(change, { slabs: "", products: "" }, (v) => ({
    method: "POST" as const,
    path: "/slabs",
    body: { slabIds: idList(v.slabs), productIds: idList(v.products) },
  }));
  const { slabs, products } = add.values;
  // The words every row repeats, once per table.
  const via = { trace: t("linkedSlabs.viaTrace"), id: t("linkedSlabs.viaId") };
  const disposition = useMemo(() => listWords(term, "dispositions", DISPOSITIONS), [term]);
  const unlink = t("linkedSlabs.unlink");
  return (
    <Card title={t("linkedSlabs.title", { n: count(claim.linkedSlabs.length) })} bodyClassName="px-2 py-3 md:p-4">
      <div className="space-y-4">
        <UntracedFlag claim={claim} />
        {claim.linkedSlabs.length ? (
          <div className="overflow-x-auto">
            <table className="w-full text-sm" data-testid="linked-slabs">
              <thead>
                <tr className="border-b-2 border-ink-200">
                  <th className={th}>{t("linkedSlabs.slab")}</th>
                  <th className={th}>{t("linkedSlabs.heat")}</th>
                  <th className={th}>{t("linkedSlabs.sequence")}</th>
                  <th className={th}>{t("linkedSlabs.grade")}</th>
                  <th className={th}>{t("linkedSlabs.disposition")}</th>
                  <th className={`${th} text-right`}>{t("linkedSlabs.defects")}</th>
                  <th className={th}>{t("linkedSlabs.linked")}</th>
                  <th className={th}>{t("linkedSlabs.products")}</th>
                  {canManage ? (
                    <th className={th}>
                      <span className="sr-only">{unlink}</span>
                    </th>
                  ) : null}
                </tr>
              </thead>
              <tbody>
                {claim.linkedSlabs.map((s) => (
                  <tr key={s.slabId} className="border-b border-ink-100 align-top" data-testid="linked-slab" data-slab={s.slabId}>
                    <td className="px-2 py-1">
                      <Link
                        to={`/slabs/${encodeURIComponent(s.slabId)}`}
                        className={`${link} inline-flex min-h-11 items-center whitespace-nowrap`}
                        data-field="slabId"
                      >
                        {s.slabId}
                      </Link>
                    </td>
                    <td className="px-2 py-1">
                      <Link to={`/heats/${encodeURIComponent(s.heatNo)}`} className={`${link} inline-flex min-h-11 items-center`} data-field="heatNo">
                        {s.heatNo}
                      </Link>
                    </td>
                    <td className="px-2 py-2.5" data-field="sequenceNo">
                      {s.sequenceNo ?? DASH}
                    </td>
                    <td className="px-2 py-2.5" data-field="grade">
                      {s.grade}
                    </td>
                    <td className="px-2 py-2.5" data-field="disposition">
                      {disposition(s.disposition)}
                    </td>
                    <td className="px-2 py-2.5 text-right tabular-nums" data-field="defects">
                      {s.defects}
                    </td>
                    <td className="px-2 py-2.5" data-field="linkedVia">
                      {s.linkedVia === "trace" ? via.trace : via.id}
                      <div className="text-xs text-ink-600">{date(s.linkedAt)}</div>
                    </td>
                    <td className="px-2 py-2.5 font-mono" data-field="products">
                      {s.products.join(", ") || DASH}
                    </td>
                    {canManage ? (
                      <td className="px-2 py-1 text-right">
                        <Button
                          variant="ghost"
                          disabled={change.isPending}
                          onClick={() => change.mutate({ method: "DELETE", path: `/slabs/${encodeURIComponent(s.slabId)}` })}
                          aria-label={t("linkedSlabs.unlinkSlab", { slabId: s.slabId })}
                        >
                          {unlink}
                        </Button>
                      </td>
                    ) : null}
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        ) : (
          <p className="px-2 text-sm text-ink-600">{canManage ? t("linkedSlabs.noneManage") : t("linkedSlabs.none")}</p>
        )}
        {canManage ? (
          <form aria-label={t("linkedSlabs.formLabel")} className="grid gap-3 px-2 md:grid-cols-[1fr_1fr_auto] md:items-end md:px-0" onSubmit={add.onSubmit}>
            <TextField label={t("linkedSlabs.bySlabId")} {...add.bind("slabs")} placeholder="L260001-104, …" hint={t("linkedSlabs.bySlabIdHint")} />
            <TextField label={t("linkedSlabs.byProductId")} {...add.bind("products")} placeholder="K26000004, …" hint={t("linkedSlabs.byProductIdHint")} />
            <Button type="submit" variant="secondary" disabled={change.isPending || !(slabs.trim() || products.trim())}>
              {change.isPending ? t("linkedSlabs.linking") : t("linkedSlabs.link")}
            </Button>
            <div className="md:col-span-3">
              <MutationError mutation={change} />
            </div>
          </form>
        ) : null}
      </div>
    </Card>
  );
}

const recipientsSchema = z.array(z.email()).min(1).max(10);

function SendHistoryForm({ claimId, heatNo, onClose }: { claimId: number; heatNo: string; onClose: () => void }) {
  const { t } = useTranslation("claims");
  const send = useSendHistory(claimId);
  const [edition, setEdition] = useState<EditionValue>(CUSTOMER_DEFAULT);
  const [to, setTo] = useState("");
  const [message, setMessage] = useState("");
  const [problem, setProblem] = useState<string | null>(null);
  if (send.isSuccess) {
    return (
      <div className="space-y-2" data-testid="history-sent">
        <Notice tone="ok" title={t("send.queuedTitle")}>
          {t(send.variables.edition === "customer" ? "send.queuedCustomer" : "send.queuedInternal", { heatNo, to: send.variables.to.join(", ") })}
        </Notice>
        <Button variant="ghost" onClick={onClose}>
          {t("send.done")}
        </Button>
      </div>
    );
  }
  return (
    <form
      aria-label={t("send.formLabel", { heatNo })}
      className="space-y-3 rounded-md border border-ink-200 bg-ink-50 p-3"
      onSubmit={(e) => {
        e.preventDefault();
        setProblem(null);
        const list = [
          ...new Set(
            to
              .split(/[\s,;]+/)
              .map((s) => s.trim())
              .filter(Boolean),
          ),
        ];
        if (!list.length) return setProblem(t("send.noRecipient"));
        const bad = list.filter((a) => !z.email().safeParse(a).success);
        if (bad.length) return setProblem(t("send.notEmail", { count: bad.length, addresses: bad.join(", ") }));
        if (!recipientsSchema.safeParse(list).success) return setProblem(t("send.tooManyRecipients"));
        if (edition.edition === "customer" && !edition.sections.length) return setProblem(t("send.noPart"));
        send.mutate({
          heatNo,
          to: list,
          message: message.trim() || undefined,
          edition: edition.edition,
          sections: edition.edition === "customer" ? edition.sections : undefined,
        });
      }}
    >
      <TextField
        label={t("send.recipients")}
        type="text"
        inputMode="email"
        autoComplete="off"
        value={to}
        onChange={(e) => setTo(e.target.value)}
        hint={t("send.recipientsHint")}
      />
      <TextAreaField
        id={`send-message-${heatNo}`}
        label={t("send.message")}
        rows={3}
        maxLength={2000}
        value={message}
        onChange={(e) => setMessage(e.target.value)}
        className={areaClass}
        placeholder={t("send.messagePlaceholder")}
      />
      <EditionChooser value={edition} onChange={setEdition} name={`send-${heatNo}`} />
      {edition.edition === "internal" ? (
        <Notice tone="caution" title={t("send.internalTitle")}>
          {t("send.internalText")}
        </Notice>
      ) : null}
      {problem ? <Notice tone="error">{problem}</Notice> : null}
      <MutationError mutation={send} />
      <div className="flex flex-wrap gap-2">
        <Button type="submit" disabled={send.isPending}>
          {send.isPending ? t("send.sending") : t("send.submit")}
        </Button>
        <Button variant="ghost" onClick={onClose}>
          {t("send.cancel")}
        </Button>
      </div>
    </form>
  );
}

/** Each heat behind the claim: its trace, its history as a workbook or on paper, and sending it. */
export function ClaimHeatsCard({ claim, canExport, canSend }: { claim: Claim; canExport: boolean; canSend: boolean }) {
  const { t } = useTranslation("claims");
  const [sending, setSending] = useState<string | null>(null);
  const heats = [...new Set(claim.linkedSlabs.map((s) => s.heatNo))];
  return (
    <Card title={t("heats.title", { n: count(heats.length) })}>
      {heats.length ? (
        <ul className="divide-y divide-ink-100" data-testid="claim-heats">
          {heats.map((heatNo) => {
            const slabs = claim.linkedSlabs.filter((s) => s.heatNo === heatNo);
            return (
              <li key={heatNo} className="space-y-3 py-3" data-testid="claim-heat" data-heat={heatNo}>
                <div className="flex flex-wrap items-baseline gap-x-3">
                  <Link to={`/heats/${encodeURIComponent(heatNo)}`} className={`${link} text-lg`}>
                    {t("heats.heat", { heatNo })}
                  </Link>
                  <span className="text-sm text-ink-700">
                    {t("heats.line", { count: slabs.length, n: count(slabs.length), grade: slabs[0]?.grade ?? "", sequence: slabs[0]?.sequenceNo ?? DASH })}
                  </span>
                </div>
                <div className="flex flex-wrap items-start gap-2">
                  <TraceLink q={heatNo} label={t("heats.openTrace")} testId="heat-trace" />
                  {canExport ? (
                    <>
                      <HistoryWorkbookButton
                        heatNo={heatNo}
                        label={t("heats.customerWorkbook")}
                        testId="heat-workbook"
                        edition={{ ...CUSTOMER_DEFAULT, claim: claim.id }}
                      />
                      <PrintableHistoryLink heatNo={heatNo} claimId={claim.id} label={t("heats.prepareCustomer")} />
                      {canSend ? (
                        <Button variant="secondary" onClick={() => setSending(heatNo)} disabled={sending === heatNo} data-testid="email-history">
                          {t("heats.email")}
                        </Button>
                      ) : null}
                    </>
                  ) : null}
                </div>
                {sending === heatNo ? <SendHistoryForm key={heatNo} claimId={claim.id} heatNo={heatNo} onClose={() => setSending(null)} /> : null}
              </li>
            );
          })}
        </ul>
      ) : (
        <p className="text-sm text-ink-600">{t("heats.none")}</p>
      )}
    </Card>
  );
}

export function ClaimAttachmentsCard({ claim, canManage }: { claim: Claim; canManage: boolean }) {
  const { t } = useTranslation("claims");
  const upload = useUploadClaimAttachments(claim.id);
  return <AttachmentsCard attachments={claim.attachments} upload={upload} canUpload={canManage} hint={t("attachments.hint")} testIdPrefix="claim-" />;
}

/** The server's record names as words (claimHistory.actions); an unknown one loses its dots rather than show as code. */
const HISTORY_ACTIONS = ["claim.create", "claim.update", "claim.slabs.link", "claim.slabs.unlink", "claim.attachments.add", "claim.history.sent"];
const historyWords = (t: TFunction, a: string) =>
  HISTORY_ACTIONS.includes(a) ? t(`claimHistory.actions.${a.replace(/\./g, "_")}`) : a.replace(/^claim\./, "").replace(/[._]/g, " ");

export function ClaimHistoryCard({ claim }: { claim: Claim }) {
  const { t } = useTranslation("claims");
  const system = t("claimHistory.system");
  return (
    <Card title={t("claimHistory.title")}>
      {claim.history.length ? (
        <ol className="space-y-2 text-sm" data-testid="claim-history">
          {[...claim.history].reverse().map((h, i) => (
            <li key={i} className="flex flex-wrap gap-x-3 border-l-2 border-ink-200 pl-3" data-testid="claim-history-entry" data-action={h.action}>
              <span className="whitespace-nowrap tabular-nums text-ink-600">{dateTime(h.at)}</span>
              <span className="font-semibold">{h.by ?? system}</span>
              <span title={h.action}>{historyWords(t, h.action)}</span>
              {h.detail ? (
                <span className="w-full text-ink-800" data-testid="claim-history-detail">
                  {h.detail}
                </span>
              ) : null}
            </li>
          ))}
        </ol>
      ) : (
        <p className="text-sm text-ink-600">{t("claimHistory.none")}</p>
      )}
    </Card>
  );
}
