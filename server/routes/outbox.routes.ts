import { z } from "zod";
import { outboxMessageSchema, outboxPageSchema, outboxQuerySchema, type OutboxMessage } from "@shared/api/mail";
import { conflict, notFound, said } from "../lib/http-error";
import { defineRoute, type AnyRoute } from "../lib/route";
import { recordAudit } from "../services/audit.service";
import type { Deps } from "./deps";

type Row = Record<string, any>;
const iso = (ms: number | null | undefined) => (ms == null ? null : new Date(ms).toISOString());

const SELECT = `select o.*, exists (select 1 from mail_received r where r.message_id = o.message_id) as received from email_outbox o`;

/**
 * Reset and invitation links carry a token that sets the account's password: whoever reads the
 * outbox could take the account over, so the screen and the API show them hidden. The message as
 * sent over SMTP keeps the real link.
 */
export function hideSecretLinks(text: string): string {
  return text.replace(/(\/reset-password\/)[^\s?#]+(?:\?[^\s#]*)?/g, "$1[link hidden]").replace(/([?&]token=)[^\s&#]+/g, "$1[hidden]");
}

function toMessage(r: Row): OutboxMessage {
  const att = (r.attachments ? JSON.parse(r.attachments) : []) as { filename: string; contentType: string; bytes: number }[];
  return {
    id: r.id,
    kind: r.kind,
    from: r.from_address,
    to: String(r.to_addresses)
      .split(",")
      .map((s) => s.trim())
      .filter(Boolean),
    subject: r.subject,
    text: hideSecretLinks(String(r.text_body)),
    attachments: att.map(({ filename, contentType, bytes }) => ({ filename, contentType, bytes })),
    status: r.status,
    attempts: r.attempts,
    nextAttemptAt: iso(r.next_attempt_at),
    lastError: r.last_error ?? null,
    sentAt: iso(r.sent_at),
    createdAt: iso(r.created_at)!,
    messageId: r.message_id ?? null,
    received: Boolean(r.received),
  };
}

export function outboxRoutes({ db, mailer }: Deps): AnyRoute[] {
  const sqlite = db.$client;
  return [
    defineRoute({
      method: "get",
      path: "/admin/outbox",
      summary: "The mail outbox: every message with its status, attempts and content (newest first)",
      tag: "admin",
      access: "outbox.read",
      query: outboxQuerySchema,
      responses: { 200: { description: "A page of messages.", schema: outboxPageSchema } },
      handler: ({ query }) => {
        const where: string[] = [];
        const params: Record<string, unknown> = {};
        if (query.status) (where.push("o.status = @status"), (params.status = query.status));
        if (query.kind) (where.push("o.kind = @kind"), (params.kind = query.kind));
        if (query.to) (where.push("o.to_addresses like @to escape '\\'"), (params.to = `%${query.to.replace(/[\\%_]/g, (c) => `\\${c}`)}%`));
        const w = where.length ? `where ${where.join(" and ")}` : "";
        const total = sqlite.prepare(`select count(*) from email_outbox o ${w}`).pluck().get(params) as number;
        const rows = sqlite
          .prepare(`${SELECT} ${w} order by o.id desc limit @limit offset @offset`)
          .all({ ...params, limit: query.pageSize, offset: (query.page - 1) * query.pageSize }) as Row[];
        const counts = Object.fromEntries(
          (sqlite.prepare("select status, count(*) as n from email_outbox group by status").all() as Row[]).map((r) => [r.status, r.n]),
        );
        return { items: rows.map(toMessage), total, page: query.page, pageSize: query.pageSize, counts, transport: mailer.describe() };
      },
    }),
    defineRoute({
      method: "post",
      path: "/admin/outbox/:id/retry",
      summary: "Put a failed message back in the queue",
      tag: "admin",
      access: "outbox.read",
      params: z.object({ id: z.coerce.number().int().positive() }),
      responses: { 200: { description: "Queued again.", schema: outboxMessageSchema }, 409: { description: "Only failed messages are retried by hand." } },
      handler: ({ params, user }) => {
        const r = sqlite.prepare(`${SELECT} where o.id = ?`).get(params.id) as Row | undefined;
        if (!r) throw notFound(said("outbox.noMessage"));
        if (!mailer.retry(params.id))
          throw conflict(
            ["queued", "sending", "sent"].includes(String(r.status))
              ? said(`outbox.notFailed.${r.status}`)
              : `This message is ${r.status}; only failed messages are retried by hand (queued ones are retried on their own).`,
          );
        recordAudit(db, {
          userId: user.id,
          action: "mail.retry",
          entity: "email_outbox",
          entityId: params.id,
          before: { status: r.status, attempts: r.attempts, lastError: r.last_error },
          after: { status: "queued" },
        });
        return toMessage(sqlite.prepare(`${SELECT} where o.id = ?`).get(params.id) as Row);
      },
    }),
  ];
}
