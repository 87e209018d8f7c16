import crypto from "node:crypto";
import { DEFAULT_TOKEN_SCOPES, TOKEN_SCOPE_LABELS, TOKEN_SCOPES, type ApiToken, type TokenScope } from "@shared/api/tokens";
import type { Db } from "../db/client";
import { HttpError, notFound, said } from "../lib/http-error";
import { recordAudit } from "./audit.service";

const hash = (token: string) => crypto.createHash("sha256").update(token).digest("hex");

/** A token as the feed route sees it (req.apiToken). */
export interface TokenIdentity {
  id: number;
  name: string;
  /** The kinds it may send, in the order of TOKEN_SCOPES. */
  scopes: TokenScope[];
}

/**
 * The kinds a stored `api_tokens.scopes` value allows. Tokens made before scopes existed hold
 * 'ingest': the level-2 system's three kinds (the README's feed section), not the product list.
 * Words it does not know allow nothing.
 */
export function parseScopes(stored: string | null | undefined): TokenScope[] {
  const words = String(stored ?? "")
    .split(",")
    .map((w) => w.trim());
  const allowed = new Set<string>(words.flatMap((w) => (w === "ingest" ? [...DEFAULT_TOKEN_SCOPES] : [w])));
  return TOKEN_SCOPES.filter((k) => allowed.has(k));
}

/** May this token send this kind? (false for no token, an unknown kind, or a kind it was not given). */
export function tokenAllows(token: { scopes: readonly string[] } | null | undefined, kind: string): boolean {
  return !!token && token.scopes.includes(kind);
}

/** 403 in words unless the token may send this kind: the check of POST /api/ingest/:kind. */
export function assertTokenAllows(token: { name: string; scopes: readonly string[] } | null | undefined, kind: string): void {
  if (tokenAllows(token, kind)) return;
  // A kind in the reader's words (errors.tokens.kinds, lower case as in a sentence); one not known as it was sent.
  const known = (k: string) => Object.hasOwn(TOKEN_SCOPE_LABELS, k);
  const terms = (ks: readonly string[]) => ({ terms: ks.map((k) => `server:errors.tokens.kinds.${k}`) });
  const scopes = token?.scopes ?? [];
  const may =
    scopes.length === 0
      ? said("tokens.maySendNothing")
      : scopes.length === 1
        ? said("tokens.maySend", { kinds: terms(scopes) })
        : said("tokens.maySendBoth", { kinds: terms(scopes.slice(0, -1)), last: terms(scopes.slice(-1)) });
  throw new HttpError(
    403,
    "token_scope",
    [
      said("tokens.scopeRefused", {
        name: token ? token.name : { terms: ["server:errors.tokens.unknownName"] },
        kind: known(kind) ? terms([kind]) : kind.toLowerCase(),
      }),
      may,
      said("tokens.askAdmin"),
    ],
    { kind, scopes },
  );
}

function toApiToken(r: Record<string, any>): ApiToken {
  const iso = (v: number | null) => (v == null ? null : new Date(v).toISOString());
  return {
    id: r.id,
    name: r.name,
    prefix: r.prefix,
    scopes: parseScopes(r.scopes),
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

/**
 * A new token for the level-2 feed, allowed to send the given kinds (stored as 'heats,slabs,…').
 * The token is returned once; only its SHA-256 is stored.
 */
export function createToken(db: Db, name: string, scopes: readonly TokenScope[], userId: string): ApiToken & { token: string } {
  const kinds = TOKEN_SCOPES.filter((k) => scopes.includes(k));
  if (kinds.length === 0) throw new HttpError(400, "no_scopes", said("tokens.noScopes"));
  const token = `ssk_${crypto.randomBytes(32).toString("base64url")}`;
  const prefix = token.slice(0, 12);
  return db.transaction(() => {
    const id = Number(
      db.$client
        .prepare("insert into api_tokens (name, token_hash, prefix, scopes, created_by) values (?, ?, ?, ?, ?)")
        .run(name, hash(token), prefix, kinds.join(","), userId).lastInsertRowid,
    );
    recordAudit(db, { userId, action: "token.create", entity: "api_token", entityId: id, after: { name, prefix, scopes: kinds } });
    const row = db.$client.prepare(`${SELECT} where t.id = ?`).get(id) as Record<string, any>;
    return { ...toApiToken(row), token };
  });
}

export function revokeToken(db: Db, id: number, userId: string): ApiToken {
  return db.transaction(() => {
    const before = db.$client.prepare(`${SELECT} where t.id = ?`).get(id) as Record<string, any> | undefined;
    if (!before) throw notFound(said("tokens.noToken"));
    if (before.revoked_at == null) {
      db.$client.prepare("update api_tokens set revoked_at = ? where id = ?").run(Date.now(), id);
      recordAudit(db, { userId, action: "token.revoke", entity: "api_token", entityId: id, before: { revokedAt: null }, after: { revoked: true } });
    }
    return toApiToken(db.$client.prepare(`${SELECT} where t.id = ?`).get(id) as Record<string, any>);
  });
}

/** The token behind an `Authorization: Bearer …` header, if it is known and not revoked, with the kinds it may send. */
export function authenticateToken(db: Db, token: string): TokenIdentity | null {
  const row = db.$client.prepare("select id, name, scopes from api_tokens where token_hash = ? and revoked_at is null").get(hash(token)) as
    { id: number; name: string; scopes: string } | undefined;
  if (!row) return null;
  db.$client.prepare("update api_tokens set last_used_at = ? where id = ?").run(Date.now(), row.id);
  return { id: row.id, name: row.name, scopes: parseScopes(row.scopes) };
}
