import type { Db } from "../db/client";
import { auditLog } from "../db/schema";

export interface AuditEntry {
  userId?: string | null;
  actor?: string | null;
  action: string;
  entity: string;
  entityId?: string | number | null;
  before?: unknown;
  after?: unknown;
}

type Tx = Pick<Db, "insert">;

/** Writes one audit row; call it inside the same transaction as the change it records. */
export function recordAudit(tx: Tx, entry: AuditEntry): void {
  tx.insert(auditLog)
    .values({
      userId: entry.userId ?? null,
      actor: entry.actor ?? null,
      action: entry.action,
      entity: entry.entity,
      entityId: entry.entityId == null ? null : String(entry.entityId),
      before: entry.before === undefined ? null : entry.before,
      after: entry.after === undefined ? null : entry.after,
    })
    .run();
}
