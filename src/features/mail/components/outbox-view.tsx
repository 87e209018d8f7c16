import { useState } from "react";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { MAIL_STATUSES, type OutboxMessage } from "@shared/api/mail";
import { Button } from "@/components/ui/button";
import { Notice } from "@/components/ui/notice";
import { bytes, dateTime, DASH } from "@/lib/format";
import { useRetryMail } from "../api/outbox.queries";

type MailStatus = (typeof MAIL_STATUSES)[number];

/** A message's status in words (`t` of the `admin` namespace). */
export const mailStatusLabel = (t: TFunction, status: MailStatus) => t(`outbox.statuses.${status}`);

/** A message's kind in words; a kind added later shows its key with spaces. */
export const kindLabel = (t: TFunction, k: string) => t(`outbox.kinds.${k}`, { defaultValue: k.replace(/_/g, " ") });

/** Waiting: an hourglass; being sent: an arrow; sent: a tick; failed: a filled disc with a bar. */
export function MailStatusMark({ status }: { status: MailStatus }) {
  const { t } = useTranslation("admin");
  const s = { fill: "none", stroke: "currentColor", strokeWidth: 1.8, strokeLinecap: "round" as const, strokeLinejoin: "round" as const };
  const color = status === "failed" ? "text-alarm-700" : status === "sent" ? "text-ok-700" : status === "sending" ? "text-strand-700" : "text-brass-700";
  return (
    <span className={`inline-flex items-center gap-1.5 whitespace-nowrap text-sm font-semibold ${color}`} data-status={status}>
      <svg viewBox="0 0 16 16" className="h-4 w-4 shrink-0" aria-hidden>
        {status === "queued" ? <path d="M4 2h8M4 14h8M5 2c0 4 6 4 6 6s-6 2-6 6M11 2c0 4-6 4-6 6s6 2 6 6" {...s} /> : null}
        {status === "sending" ? <path d="M2 8h11M9 4l4 4-4 4" {...s} strokeWidth={2} /> : null}
        {status === "sent" ? <path d="M2.5 8.5l3.5 3.5 7.5-8" {...s} strokeWidth={2.2} /> : null}
        {status === "failed" ? (
          <>
            <circle cx="8" cy="8" r="7" fill="currentColor" />
            <path d="M4.5 8h7" stroke="#fff" strokeWidth="2.2" strokeLinecap="round" />
          </>
        ) : null}
      </svg>
      {mailStatusLabel(t, status)}
    </span>
  );
}

function RetryButton({ id, onRetried }: { id: number; onRetried: (m: OutboxMessage) => void }) {
  const { t } = useTranslation("admin");
  const retry = useRetryMail();
  return (
    <div className="space-y-2">
      <Button onClick={() => retry.mutate(id, { onSuccess: onRetried })} disabled={retry.isPending} data-testid="retry-mail">
        {retry.isPending ? t("outbox.queuing") : t("outbox.tryAgain")}
      </Button>
      {retry.isError ? <Notice tone="error">{retry.error.message}</Notice> : null}
    </div>
  );
}

/** One message as it was queued: who sends it to whom, the text and the attachments. */
export function MailMessage({ m, onRetried }: { m: OutboxMessage; onRetried: (m: OutboxMessage) => void }) {
  const { t } = useTranslation("admin");
  return (
    <div className="space-y-3 rounded-md border border-ink-200 bg-ink-50 p-4" data-testid="mail-message">
      <dl className="grid gap-x-6 gap-y-2 text-sm md:grid-cols-2">
        <div>
          <dt className="text-xs font-semibold uppercase text-ink-600">{t("outbox.message.from")}</dt>
          <dd data-field="from">{m.from}</dd>
        </div>
        <div>
          <dt className="text-xs font-semibold uppercase text-ink-600">{t("outbox.message.to")}</dt>
          <dd data-field="to">{m.to.join(", ")}</dd>
        </div>
        <div className="md:col-span-2">
          <dt className="text-xs font-semibold uppercase text-ink-600">{t("outbox.message.subject")}</dt>
          <dd className="font-semibold">{m.subject}</dd>
        </div>
        <div>
          <dt className="text-xs font-semibold uppercase text-ink-600">{t("outbox.message.queuedSent")}</dt>
          <dd>
            {dateTime(m.createdAt)} · {m.sentAt ? dateTime(m.sentAt) : t("outbox.message.notYet")}
          </dd>
        </div>
        <div>
          <dt className="text-xs font-semibold uppercase text-ink-600">{t("outbox.message.messageId")}</dt>
          <dd className="break-all">{m.messageId ?? DASH}</dd>
        </div>
      </dl>
      <pre
        className="max-h-96 overflow-auto whitespace-pre-wrap rounded border border-ink-200 bg-white p-3 font-sans text-sm text-ink-900"
        data-testid="mail-body"
      >
        {m.text}
      </pre>
      {m.text.includes("[link hidden]") ? <Notice title={t("outbox.message.linkHiddenTitle")}>{t("outbox.message.linkHidden")}</Notice> : null}
      {m.attachments.length ? (
        <ul className="text-sm">
          {m.attachments.map((a) => (
            <li key={a.filename}>
              <span className="font-semibold">{a.filename}</span>{" "}
              <span className="text-ink-600">
                {a.contentType} · {bytes(a.bytes)}
              </span>
            </li>
          ))}
        </ul>
      ) : (
        <p className="text-sm text-ink-600">{t("outbox.message.noAttachments")}</p>
      )}
      {m.lastError ? (
        <Notice tone="error" title={t("outbox.message.lastError")}>
          {m.lastError}
        </Notice>
      ) : null}
      {m.status === "failed" ? <RetryButton id={m.id} onRetried={onRetried} /> : null}
    </div>
  );
}

const th = "px-2 py-2 text-left text-xs font-semibold text-ink-700";

export function OutboxTable({ items, localServer }: { items: OutboxMessage[]; localServer: boolean }) {
  const { t } = useTranslation("admin");
  const [openId, setOpenId] = useState<number | null>(null);
  // Said here, not in the message: a retried message may leave a "failed" list at once.
  const [retried, setRetried] = useState<OutboxMessage | null>(null);
  const notice = retried ? (
    <div className="mb-3">
      <Notice tone="ok">{t("outbox.table.queuedAgain", { subject: retried.subject, status: t(`outbox.statusesInSentence.${retried.status}`) })}</Notice>
    </div>
  ) : null;
  if (items.length === 0)
    return (
      <>
        {notice}
        <p className="text-sm text-ink-600" data-testid="outbox-empty">
          {t("outbox.table.noMatch")}
        </p>
      </>
    );
  return (
    <div className="overflow-x-auto">
      {notice}
      <table className="w-full text-sm" data-testid="outbox">
        <thead>
          <tr className="border-b-2 border-ink-200">
            <th className={th}>{t("outbox.table.status")}</th>
            <th className={th}>{t("outbox.table.kind")}</th>
            <th className={th}>{t("outbox.table.to")}</th>
            <th className={th}>{t("outbox.table.subject")}</th>
            <th className={`${th} text-right`}>{t("outbox.table.attempts")}</th>
            <th className={th}>{t("outbox.table.nextAttempt")}</th>
            <th className={th}>{t("outbox.table.lastError")}</th>
            {localServer ? <th className={th}>{t("outbox.table.localServer")}</th> : null}
          </tr>
        </thead>
        <tbody>
          {items.map((m) => (
            <Row
              key={m.id}
              m={m}
              open={openId === m.id}
              onToggle={() => setOpenId(openId === m.id ? null : m.id)}
              localServer={localServer}
              onRetried={setRetried}
            />
          ))}
        </tbody>
      </table>
    </div>
  );
}

function Row({
  m,
  open,
  onToggle,
  localServer,
  onRetried,
}: {
  m: OutboxMessage;
  open: boolean;
  onToggle: () => void;
  localServer: boolean;
  onRetried: (m: OutboxMessage) => void;
}) {
  const { t } = useTranslation("admin");
  const cols = localServer ? 8 : 7;
  return (
    <>
      <tr className="border-b border-ink-100 align-top" data-testid="outbox-row" data-status={m.status} data-kind={m.kind}>
        <td className="px-2 py-2">
          <MailStatusMark status={m.status} />
        </td>
        <td className="whitespace-nowrap px-2 py-2" data-field="kind">
          {kindLabel(t, m.kind)}
        </td>
        <td className="px-2 py-2" data-field="to">
          {m.to.join(", ")}
        </td>
        <td className="min-w-48 px-2 py-2">
          <button
            type="button"
            onClick={onToggle}
            aria-expanded={open}
            className="min-h-11 text-left font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2"
            data-field="subject"
          >
            {m.subject}
          </button>
        </td>
        <td className="px-2 py-2 text-right tabular-nums" data-field="attempts">
          {m.attempts}
        </td>
        <td className="whitespace-nowrap px-2 py-2">{m.status === "sent" ? DASH : dateTime(m.nextAttemptAt)}</td>
        <td className="max-w-56 truncate px-2 py-2 text-ink-700" title={m.lastError ?? undefined}>
          {m.lastError ?? DASH}
        </td>
        {localServer ? (
          <td className="whitespace-nowrap px-2 py-2" data-field="received">
            {m.received ? t("outbox.table.received") : t("outbox.table.notReceived")}
          </td>
        ) : null}
      </tr>
      {open ? (
        <tr>
          <td colSpan={cols} className="px-2 pb-4">
            <MailMessage m={m} onRetried={onRetried} />
          </td>
        </tr>
      ) : null}
    </>
  );
}
