import { z } from "zod";

/** The outgoing mail queue as the admin's mail outbox screen shows it. */
export const MAIL_STATUSES = ["queued", "sending", "sent", "failed"] as const;
export const MAIL_KINDS = [
  "critical_defect",
  "action_assigned",
  "action_overdue",
  "investigation_closed",
  "invitation",
  "password_reset",
  "heat_history",
  "risk_drift",
] as const;

export const outboxQuerySchema = z.object({
  status: z.enum(MAIL_STATUSES).optional(),
  kind: z.enum(MAIL_KINDS).optional(),
  to: z.string().trim().max(200).optional(),
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
});

export const outboxMessageSchema = z.object({
  id: z.number().int(),
  kind: z.string(),
  from: z.string(),
  to: z.array(z.string()),
  subject: z.string(),
  text: z.string(),
  attachments: z.array(z.object({ filename: z.string(), contentType: z.string(), bytes: z.number().int() })),
  status: z.enum(MAIL_STATUSES),
  attempts: z.number().int(),
  nextAttemptAt: z.string().nullable(),
  lastError: z.string().nullable(),
  sentAt: z.string().nullable(),
  createdAt: z.string(),
  messageId: z.string().nullable(),
  /** When the local fake SMTP server is the mail server: whether it received the message. */
  received: z.boolean(),
});
export type OutboxMessage = z.infer<typeof outboxMessageSchema>;

export const outboxPageSchema = z.object({
  items: z.array(outboxMessageSchema),
  total: z.number().int(),
  page: z.number().int(),
  pageSize: z.number().int(),
  counts: z.record(z.string(), z.number().int()),
  /** Where the mail goes: "the local fake SMTP server on port 2525" or the SMTP host. */
  transport: z.string(),
});
export type OutboxPage = z.infer<typeof outboxPageSchema>;
