import type { Db } from "../db/client";
import { eq } from "drizzle-orm";
import { auditLog, user } from "../db/schema";
import { prepared } from "../db/prepared";

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

const json = (v: unknown) => (v === undefined || v === null ? null : JSON.stringify(v));

/**
 * Writes one audit row; call it inside the same transaction as the change it records. The person's
 * name is copied in as it is now, so the trail keeps who acted as they were known at the time.
 *
 * Given the database itself (not a Drizzle transaction object), the row goes in through statements
 * prepared once: the ORM builds and compiles both queries on every call, a twentieth of a defect
 * post's CPU. A `db.transaction(() => …)` around the call still holds it: one connection, one
 * transaction. Both ways write the same row (the JSON columns as JSON.stringify, `at` by the
 * column's default); tests/server/write-path.test.ts compares them.
 */
export function recordAudit(tx: Tx, entry: AuditEntry): void {
  const sqlite = (tx as Partial<Db>).$client;
  if (sqlite) {
    const userName = entry.userId ? (prepared<[string], string>(sqlite, "select name from user where id = ?").pluck().get(entry.userId) ?? null) : null;
    prepared(sqlite, "insert into audit_log (user_id, user_name, actor, action, entity, entity_id, before, after) values (?, ?, ?, ?, ?, ?, ?, ?)").run(
      entry.userId ?? null,
      userName,
      entry.actor ?? null,
      entry.action,
      entry.entity,
      entry.entityId == null ? null : String(entry.entityId),
      json(entry.before),
      json(entry.after),
    );
    return;
  }
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
