import crypto from "node:crypto";
import type { ApiToken } from "@shared/api/heats";
import type { Db } from "../db/client";
import { notFound } from "../lib/http-error";
import { recordAudit } from "./audit.service";

const hash = (token: string) => crypto.createHash("sha256").update(token).digest("hex");

function toApiToken(r: Record<string, any>): ApiToken {
  const iso = (v: number | null) => (v == null ? null : new Date(v).toISOString());
  return {
    id: r.id,
    name: r.name,
    prefix: r.prefix,
    scopes: String(r.scopes).split(",").filter(Boolean),
    createdAt: iso(r.created_at)!,
    createdByName: r.createdByName ?? null,
    lastUsedAt: iso(r.last_used_at),
    revokedAt: iso(r.revoked_at),
  };
}

const SELECT = "select t.*, u.name as createdByName from api_tokens t left join user u on u.id = t.created_by";

export function listTokens(db: Db): ApiToken[] {
  return (db.$client.prepare(`${SELECT} order by t.revoked_at is not null, t.id desc`).all() as Record<string, any>[]).map(toApiToken);
}

/** A new token for the level-2 feed. The token is returned once; only its SHA-256 is stored. */
export function createToken(db: Db, name: string, userId: string): ApiToken & { token: string } {
  const token = `ssk_${crypto.randomBytes(32).toString("base64url")}`;
  const prefix = token.slice(0, 12);
  return db.transaction(() => {
    const id = Number(
      db.$client
        .prepare("insert into api_tokens (name, token_hash, prefix, scopes, created_by) values (?, ?, ?, 'ingest', ?)")
        .run(name, hash(token), prefix, userId).lastInsertRowid,
    );
    recordAudit(db, { userId, action: "token.create", entity: "api_token", entityId: id, after: { name, prefix, scopes: ["ingest"] } });
    const row = db.$client.prepare(`${SELECT} where t.id = ?`).get(id) as Record<string, any>;
    return { ...toApiToken(row), token };
  });
}

export function revokeToken(db: Db, id: number, userId: string): ApiToken {
  return db.transaction(() => {
    const before = db.$client.prepare(`${SELECT} where t.id = ?`).get(id) as Record<string, any> | undefined;
    if (!before) throw notFound("There is no such API token.");
    if (before.revoked_at == null) {
      db.$client.prepare("update api_tokens set revoked_at = ? where id = ?").run(Date.now(), id);
      recordAudit(db, { userId, action: "token.revoke", entity: "api_token", entityId: id, before: { revokedAt: null }, after: { revoked: true } });
    }
    return toApiToken(db.$client.prepare(`${SELECT} where t.id = ?`).get(id) as Record<string, any>);
  });
}

/** The token behind an `Authorization: Bearer …` header, if it is known and not revoked. */
export function authenticateToken(db: Db, token: string): { id: number; name: string; scopes: string[] } | null {
  const row = db.$client.prepare("select id, name, scopes from api_tokens where token_hash = ? and revoked_at is null").get(hash(token)) as
    | { id: number; name: string; scopes: string }
    | undefined;
  if (!row) return null;
  db.$client.prepare("update api_tokens set last_used_at = ? where id = ?").run(Date.now(), row.id);
  return { id: row.id, name: row.name, scopes: row.scopes.split(",") };
}
