import type { Db } from "../db/client";
import { eq } from "drizzle-orm";
import { auditLog, user } from "../db/schema";

export interface AuditEntry {
  userId?: string | null;
  actor?: string | null;
  action: string;
  entity: string;
  entityId?: string | number | null;
  before?: unknown;
  after?: unknown;
}

type Tx = Pick<Db, "insert" | "select">;

/**
 * Writes one audit row; call it inside the same transaction as the change it records. The person's
 * name is copied in as it is now, so the trail keeps who acted as they were known at the time.
 */
export function recordAudit(tx: Tx, entry: AuditEntry): void {
  const userName = entry.userId ? (tx.select({ name: user.name }).from(user).where(eq(user.id, entry.userId)).get()?.name ?? null) : null;
  tx.insert(auditLog)
    .values({
      userId: entry.userId ?? null,
      userName,
      actor: entry.actor ?? null,
      action: entry.action,
      entity: entry.entity,
      entityId: entry.entityId == null ? null : String(entry.entityId),
      before: entry.before === undefined ? null : entry.before,
      after: entry.after === undefined ? null : entry.after,
    })
    .run();
}
