import { useState } from "react";
import { Link } from "react-router";
import { z } from "zod";
import { CLAIM_STATUS_LABELS, type Claim } from "@shared/api/claims";
import { CLAIM_STATUSES, type ClaimStatus } from "@shared/domain";
import { AttachmentsCard } from "@/components/attachments-card";
import { MutationError, TextAreaField, useAddRow } from "@/components/mutation-form";
import { Button } from "@/components/ui/button";
import { Card } from "@/components/ui/card";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { date, dateTime, day, DASH, plural, withUnit } from "@/lib/format";
import { dispositionLabel } from "@/lib/labels";
import { useClaimChange, useSendHistory, useUploadClaimAttachments } from "../api/claims.queries";
import { ClaimStatusMark } from "./claim-marks";
import { CUSTOMER_DEFAULT, EditionChooser, type EditionValue } from "./edition-chooser";
import { HistoryWorkbookButton, PrintableHistoryLink, TraceLink } from "./history-actions";
import { idList } from "./new-claim-form";

const link = "font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2";
const th = "px-2 py-2 text-left text-xs font-semibold uppercase tracking-wide text-ink-600";
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
  if (!claim.untracedProducts.length) return null;
  return (
    <div data-testid="untraced">
      <Notice tone="caution" title={`Not traced (${claim.untracedProducts.length})`}>
        The rolling-mill trace does not know{" "}
        {claim.untracedProducts.map((p, i) => (
          <span key={p}>
            {i ? ", " : ""}
            <strong data-testid="untraced-id">{p}</strong>
          </span>
        ))}
        . Check the id with the customer, or import the rolling mill's coil and plate list; their slabs are not linked.
      </Notice>
    </div>
  );
}

export function ClaimSummaryCard({ claim, canManage }: { claim: Claim; canManage: boolean }) {
  const change = useClaimChange(claim.id);
  const [notes, setNotes] = useState(claim.notes ?? "");
  const notesChanged = notes.trim() !== (claim.notes ?? "").trim();
  return (
    <Card>
      <div className="grid gap-5 xl:grid-cols-[3fr_2fr]">
        <dl className="grid grid-cols-2 gap-x-6 gap-y-3 md:grid-cols-3">
          <Item label="Customer" testId="claim-customer">
            {claim.customer}
          </Item>
          <Item label="Received">{day(claim.receivedOn)}</Item>
          <Item label="Quantity">{withUnit(claim.quantityT, "t", 1)}</Item>
          <Item label="Defect complained of" testId="claim-complaint" className="col-span-2 md:col-span-3">
            {claim.defectComplained}
          </Item>
          <Item label="Coils and plates" testId="claim-products" className="col-span-2 md:col-span-3">
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
                      {untraced ? <span className="font-sans text-xs font-bold text-ember-700">not traced</span> : null}
                    </span>
                  );
                })}
              </span>
            ) : (
              "none named"
            )}
          </Item>
          <Item label="Recorded">
            {dateTime(claim.createdAt)}
            {claim.createdBy ? <div className="text-xs text-ink-600">by {claim.createdBy.name}</div> : null}
          </Item>
          <Item label="Slabs · heats">
            {claim.slabs} · {claim.heats.length}
          </Item>
        </dl>
        <div className="space-y-4">
          <div>
            <div className="text-xs font-semibold uppercase tracking-wide text-ink-600">Status</div>
            <div className="mt-1">
              <ClaimStatusMark status={claim.status} />
            </div>
            {canManage ? (
              <fieldset className="mt-2">
                <legend className="sr-only">Change the status</legend>
                <div className="flex flex-wrap gap-2" role="radiogroup" aria-label="Change the status">
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
                        {CLAIM_STATUS_LABELS[s]}
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
                aria-label="Notes"
                className="space-y-2"
                onSubmit={(e) => {
                  e.preventDefault();
                  change.mutate({ method: "PATCH", body: { notes: notes.trim() || null } });
                }}
              >
                <label htmlFor="claim-notes-edit" className="text-xs font-semibold uppercase tracking-wide text-ink-600">
                  Notes
                </label>
                <textarea id="claim-notes-edit" rows={4} maxLength={5000} value={notes} onChange={(e) => setNotes(e.target.value)} className={areaClass} />
                <Button type="submit" variant="secondary" disabled={!notesChanged || change.isPending}>
                  {change.isPending ? "Saving…" : "Save the notes"}
                </Button>
              </form>
            ) : (
              <Item label="Notes" testId="claim-notes">
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
  const change = useClaimChange(claim.id);
  const add = useAddRow(change, { slabs: "", products: "" }, (v) => ({
    method: "POST" as const,
    path: "/slabs",
    body: { slabIds: idList(v.slabs), productIds: idList(v.products) },
  }));
  const { slabs, products } = add.values;
  return (
    <Card title={`Linked slabs (${claim.linkedSlabs.length})`} bodyClassName="px-2 py-3 md:p-4">
      <div className="space-y-4">
        <UntracedFlag claim={claim} />
        {claim.linkedSlabs.length ? (
          <div className="overflow-x-auto">
            <table className="w-full text-sm" data-testid="linked-slabs">
              <thead>
                <tr className="border-b-2 border-ink-200">
                  <th className={th}>Slab</th>
                  <th className={th}>Heat</th>
                  <th className={th}>Sequence</th>
                  <th className={th}>Grade</th>
                  <th className={th}>Disposition</th>
                  <th className={`${th} text-right`}>Defects</th>
                  <th className={th}>Linked</th>
                  <th className={th}>Coils / plates</th>
                  {canManage ? (
                    <th className={th}>
                      <span className="sr-only">Unlink</span>
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
                      {dispositionLabel(s.disposition)}
                    </td>
                    <td className="px-2 py-2.5 text-right tabular-nums" data-field="defects">
                      {s.defects}
                    </td>
                    <td className="px-2 py-2.5" data-field="linkedVia">
                      {s.linkedVia === "trace" ? "through the trace" : "by slab id"}
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
                          aria-label={`Unlink slab ${s.slabId}`}
                        >
                          Unlink
                        </Button>
                      </td>
                    ) : null}
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        ) : (
          <p className="px-2 text-sm text-ink-600">No slab linked yet{canManage ? ": link them by slab id, or by coil / plate id through the trace." : "."}</p>
        )}
        {canManage ? (
          <form aria-label="Link more slabs" className="grid gap-3 px-2 md:grid-cols-[1fr_1fr_auto] md:items-end md:px-0" onSubmit={add.onSubmit}>
            <TextField label="Link slabs by id" {...add.bind("slabs")} placeholder="L260001-104, …" hint="Slab ids, separated by commas or spaces" />
            <TextField
              label="or by coil / plate id"
              {...add.bind("products")}
              placeholder="K26000004, …"
              hint="Traced to their slabs through the rolling mill's list"
            />
            <Button type="submit" variant="secondary" disabled={change.isPending || !(slabs.trim() || products.trim())}>
              {change.isPending ? "Linking…" : "Link"}
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
  const send = useSendHistory(claimId);
  const [edition, setEdition] = useState<EditionValue>(CUSTOMER_DEFAULT);
  const [to, setTo] = useState("");
  const [message, setMessage] = useState("");
  const [problem, setProblem] = useState<string | null>(null);
  if (send.isSuccess) {
    return (
      <div className="space-y-2" data-testid="history-sent">
        <Notice tone="ok" title="Queued">
          The {send.variables.edition === "customer" ? "customer" : "internal"} edition of heat {heatNo}'s history is queued for {send.variables.to.join(", ")};
          see the claim's history below.
        </Notice>
        <Button variant="ghost" onClick={onClose}>
          Done
        </Button>
      </div>
    );
  }
  return (
    <form
      aria-label={`E-mail the history of heat ${heatNo}`}
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
        if (!list.length) return setProblem("Give at least one recipient's e-mail address.");
        const bad = list.filter((a) => !z.email().safeParse(a).success);
        if (bad.length) return setProblem(`Not an e-mail address: ${bad.join(", ")}.`);
        if (!recipientsSchema.safeParse(list).success) return setProblem("At most 10 recipients at a time.");
        if (edition.edition === "customer" && !edition.sections.length) return setProblem("Choose at least one part for the customer.");
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
        label="Recipients"
        type="text"
        inputMode="email"
        autoComplete="off"
        value={to}
        onChange={(e) => setTo(e.target.value)}
        hint="E-mail addresses, separated by commas or spaces (up to 10)"
      />
      <TextAreaField
        id={`send-message-${heatNo}`}
        label="Message (optional)"
        rows={3}
        maxLength={2000}
        value={message}
        onChange={(e) => setMessage(e.target.value)}
        className={areaClass}
        placeholder="Shown above the standard text; the workbook is attached"
      />
      <EditionChooser value={edition} onChange={setEdition} name={`send-${heatNo}`} />
      {edition.edition === "internal" ? (
        <Notice tone="caution" title="Internal edition">
          It names the plant's people and holds notes, review states, causes and the plant's other claims: send it only inside the company.
        </Notice>
      ) : null}
      {problem ? <Notice tone="error">{problem}</Notice> : null}
      <MutationError mutation={send} />
      <div className="flex flex-wrap gap-2">
        <Button type="submit" disabled={send.isPending}>
          {send.isPending ? "Queuing…" : "Send the workbook"}
        </Button>
        <Button variant="ghost" onClick={onClose}>
          Cancel
        </Button>
      </div>
    </form>
  );
}

/** Each heat behind the claim: its trace, its history as a workbook or on paper, and sending it. */
export function ClaimHeatsCard({ claim, canExport, canSend }: { claim: Claim; canExport: boolean; canSend: boolean }) {
  const [sending, setSending] = useState<string | null>(null);
  const heats = [...new Set(claim.linkedSlabs.map((s) => s.heatNo))];
  return (
    <Card title={`Heats behind the claim (${heats.length})`}>
      {heats.length ? (
        <ul className="divide-y divide-ink-100" data-testid="claim-heats">
          {heats.map((heatNo) => {
            const slabs = claim.linkedSlabs.filter((s) => s.heatNo === heatNo);
            return (
              <li key={heatNo} className="space-y-3 py-3" data-testid="claim-heat" data-heat={heatNo}>
                <div className="flex flex-wrap items-baseline gap-x-3">
                  <Link to={`/heats/${encodeURIComponent(heatNo)}`} className={`${link} text-lg`}>
                    Heat {heatNo}
                  </Link>
                  <span className="text-sm text-ink-700">
                    {slabs[0]?.grade} · sequence {slabs[0]?.sequenceNo ?? DASH} · {plural(slabs.length, "linked slab")}
                  </span>
                </div>
                <div className="flex flex-wrap items-start gap-2">
                  <TraceLink q={heatNo} label="Open the trace" testId="heat-trace" />
                  {canExport ? (
                    <>
                      <HistoryWorkbookButton
                        heatNo={heatNo}
                        label="Customer's history (.xlsx)"
                        testId="heat-workbook"
                        edition={{ ...CUSTOMER_DEFAULT, claim: claim.id }}
                      />
                      <PrintableHistoryLink heatNo={heatNo} claimId={claim.id} label="Prepare the customer's history" />
                      {canSend ? (
                        <Button variant="secondary" onClick={() => setSending(heatNo)} disabled={sending === heatNo} data-testid="email-history">
                          E-mail the history
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
        <p className="text-sm text-ink-600">No heat yet: link the claim's slabs first.</p>
      )}
    </Card>
  );
}

export function ClaimAttachmentsCard({ claim, canManage }: { claim: Claim; canManage: boolean }) {
  const upload = useUploadClaimAttachments(claim.id);
  return (
    <AttachmentsCard
      attachments={claim.attachments}
      upload={upload}
      canUpload={canManage}
      hint="Attach files: the customer's letter, photos, test reports (up to 5, 20 MB each)"
      testIdPrefix="claim-"
    />
  );
}

const HISTORY_WORDS: Record<string, string> = {
  "claim.create": "recorded the claim",
  "claim.update": "changed the claim",
  "claim.slabs.link": "linked slabs",
  "claim.slabs.unlink": "unlinked a slab",
  "claim.attachments.add": "attached files",
  "claim.history.sent": "e-mailed a heat history",
};
/** The server's record names as words; an unknown one loses its dots rather than show as code. */
const historyWords = (a: string) => HISTORY_WORDS[a] ?? a.replace(/^claim\./, "").replace(/[._]/g, " ");
/** "Status → under_review" reads "Status → Under review". */
const detailWords = (d: string) => d.replace(/(Status → )(\w+)/, (_, p: string, s: string) => p + (CLAIM_STATUS_LABELS[s as ClaimStatus] ?? s));

export function ClaimHistoryCard({ claim }: { claim: Claim }) {
  return (
    <Card title="The claim's history">
      {claim.history.length ? (
        <ol className="space-y-2 text-sm" data-testid="claim-history">
          {[...claim.history].reverse().map((h, i) => (
            <li key={i} className="flex flex-wrap gap-x-3 border-l-2 border-ink-200 pl-3" data-testid="claim-history-entry" data-action={h.action}>
              <span className="whitespace-nowrap tabular-nums text-ink-600">{dateTime(h.at)}</span>
              <span className="font-semibold">{h.by ?? "the system"}</span>
              <span title={h.action}>{historyWords(h.action)}</span>
              {h.detail ? (
                <span className="w-full text-ink-800" data-testid="claim-history-detail">
                  {detailWords(h.detail)}
                </span>
              ) : null}
            </li>
          ))}
        </ol>
      ) : (
        <p className="text-sm text-ink-600">Nothing recorded yet.</p>
      )}
    </Card>
  );
}
