import type Database from "better-sqlite3";

/**
 * Statements prepared once per connection and kept: `sqlite.prepare()` compiles the SQL every time
 * it is called (≈ 10–30 µs each, a tenth of a defect post's CPU before this existed). better-sqlite3
 * has no statement cache of its own, and a statement belongs to its connection, so the cache is
 * keyed by the connection (dropped with it) and then by the SQL text.
 *
 * Only for SQL text written in the code. Text built from input (an `in (?, ?, …)` of varying
 * length, say) would make a new entry per variant: past MAX_PER_CONNECTION entries such statements
 * are prepared as before and not kept, so the cache cannot grow without bound. A mode set on a
 * statement (`.pluck()`, `.raw()`) stays on it: give each SQL text one mode. Not for `.iterate()`:
 * a statement being iterated cannot run again until the iteration ends.
 */
const MAX_PER_CONNECTION = 500;
const statements = new WeakMap<Database.Database, Map<string, Database.Statement>>();

// `{}` is better-sqlite3's own constraint for a statement's parameters (named parameters are an object).
// eslint-disable-next-line @typescript-eslint/no-empty-object-type
export function prepared<P extends unknown[] | {} = unknown[], R = unknown>(sqlite: Database.Database, sql: string): Database.Statement<P, R> {
  let byText = statements.get(sqlite);
  if (!byText) statements.set(sqlite, (byText = new Map()));
  let stmt = byText.get(sql);
  if (!stmt) {
    stmt = sqlite.prepare(sql);
    if (byText.size < MAX_PER_CONNECTION) byText.set(sql, stmt);
  }
  return stmt as unknown as Database.Statement<P, R>;
}
