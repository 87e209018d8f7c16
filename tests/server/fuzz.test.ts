import { afterAll, beforeAll, describe, expect, it } from "vitest";
import crypto from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import request from "supertest";
import type { z } from "zod";
import type { AnyRoute } from "../../server/lib/route";
import type { Server } from "node:http";
import { createTestApp, TEST_PASSWORD, type TestApp } from "../helpers/test-app";

/**
 * Bad input against every route the app serves, built from each route's own declaration (params,
 * query and body schemas, upload middleware). Signed in as admin, so the role gate is never what
 * answers; the level-2 feed is called with a real API token.
 *
 * Each case is either
 *  - "refused": the request is wrong and must get a 4xx in the error envelope, or
 *  - "hostile-valid": the request is hostile but legal (an SQL string typed into a search box) and
 *    must get a non-5xx answer of the declared kind, and write nothing.
 * After the whole run, no table has gained or lost a row or changed a value, and UPLOAD_DIR holds
 * the same files.
 */

type Expect = "refused" | "hostile-valid";
type Method = AnyRoute["method"];
interface Case {
  route: string;
  kind: string;
  what: string;
  expect: Expect;
  /** Why this case is refused, or why it is legal input. */
  why: string;
  /** When set: the refusal must be the schema's (400 validation_failed) and name this field. */
  field?: string;
  send: () => request.Test;
}

let t: TestApp;
/** One listening server for the whole run (supertest would otherwise open one per request). */
let server: Server;
let admin: request.Agent;
let token: string;
let origin: string;
const cases: Case[] = [];
/** Combinations not sent, each with its reason (printed with the totals). */
const notSent: string[] = [];

const key = (r: AnyRoute) => `${r.method.toUpperCase()} ${r.path}`;
const routes = () => t.app.locals.routes as AnyRoute[];

// ---------------------------------------------------------------------------------------------
// Hostile values
// ---------------------------------------------------------------------------------------------

const SQL = ["1' OR '1'='1", "1; DROP TABLE defects;--"] as const;
const TRAVERSAL = "../../../../etc/passwd";
const UNICODE = "ŝľàб😀\u202e";
const HUGE_BODY_STRING = "A".repeat(100_000);
/** Placeholder replaced by a bare 1e309 in the JSON text (JSON.parse reads it as Infinity). */
const INF = "__fuzz_1e309__";

/** Path segments as they go on the wire (already encoded where a client would encode them). */
const PATH_VALUES: { label: string; raw: string }[] = [
  { label: "traversal ../../etc/passwd", raw: "../../etc/passwd" },
  { label: "encoded traversal ..%2F..%2Fetc%2Fpasswd", raw: "..%2F..%2Fetc%2Fpasswd" },
  { label: "encoded dots %2e%2e%2f", raw: "%2e%2e%2f" },
  ...SQL.map((s) => ({ label: `SQL ${s}`, raw: encodeURIComponent(s) })),
  { label: "5,000 characters", raw: "A".repeat(5_000) },
  { label: "unicode with RTL override", raw: encodeURIComponent(UNICODE) },
  { label: "-1", raw: "-1" },
  { label: "NaN", raw: "NaN" },
  { label: "0", raw: "0" },
  { label: "1e309", raw: "1e309" },
];

// ---------------------------------------------------------------------------------------------
// Reading a zod declaration
// ---------------------------------------------------------------------------------------------

type Kind = "string" | "number" | "boolean" | "enum" | "literal" | "union" | "array" | "object" | "record" | "other";
interface Info {
  kind: Kind;
  optional: boolean;
  nullable: boolean;
  schema: z.ZodType;
  coerce: boolean;
  format?: string;
}
const def = (s: z.ZodType) => (s as unknown as { def: Record<string, any> }).def;

function inspect(schema: z.ZodType): Info {
  let s = schema;
  let optional = false;
  let nullable = false;
  for (;;) {
    const d = def(s);
    if (d.type === "optional" || d.type === "default" || d.type === "prefault") ((optional = true), (s = d.innerType));
    else if (d.type === "nullable") ((nullable = true), (s = d.innerType));
    else if (d.type === "pipe")
      s = d.in; // a transform: what the client sends is the input side
    else if (d.type === "readonly" || d.type === "catch") s = d.innerType;
    else break;
  }
  const d = def(s);
  const kinds: Kind[] = ["string", "number", "boolean", "enum", "literal", "union", "array", "object", "record"];
  return { kind: kinds.includes(d.type) ? d.type : "other", optional, nullable, schema: s, coerce: Boolean(d.coerce), format: d.format };
}
const shapeOf = (s: z.ZodType) => (inspect(s).schema as unknown as { shape?: Record<string, z.ZodType> }).shape ?? {};
const elementOf = (s: z.ZodType) => def(inspect(s).schema).element as z.ZodType;

/** Every field of a body, nested objects and the first element of arrays of objects included. */
function fieldsOf(schema: z.ZodType, base: unknown, prefix: (string | number)[] = []): { path: (string | number)[]; info: Info }[] {
  const out: { path: (string | number)[]; info: Info }[] = [];
  for (const [name, field] of Object.entries(shapeOf(schema))) {
    const p = [...prefix, name];
    const info = inspect(field);
    out.push({ path: p, info });
    const here = getAt(base, p);
    if (info.kind === "object" && here && typeof here === "object") out.push(...fieldsOf(field, here, p));
    if (info.kind === "array" && Array.isArray(here) && here[0] && typeof here[0] === "object" && inspect(elementOf(field)).kind === "object") {
      out.push(...fieldsOf(elementOf(field), here[0], [...p, 0]));
    }
  }
  return out;
}
function getAt(obj: unknown, p: (string | number)[]): unknown {
  return p.reduce<unknown>((o, k) => (o && typeof o === "object" ? (o as Record<string, unknown>)[k] : undefined), obj);
}
function setAt(obj: unknown, p: (string | number)[], value: unknown, remove = false): unknown {
  const copy = structuredClone(obj) as Record<string | number, unknown>;
  let o = copy;
  for (const k of p.slice(0, -1)) o = o[k] as Record<string | number, unknown>;
  if (remove) delete o[p.at(-1)!];
  else o[p.at(-1)!] = value;
  return copy;
}
const json = (v: unknown) => JSON.stringify(v).replaceAll(`"${INF}"`, "1e309");

/** Values of the wrong JSON type for a field of this kind (each one a type the field cannot take). */
function wrongTypes(info: Info): { label: string; value: unknown }[] {
  const w: Record<Kind, { label: string; value: unknown }[]> = {
    string: [
      { label: "a number", value: 12345 },
      { label: "an array", value: ["text"] },
    ],
    number: [
      { label: "a numeric string", value: "12" },
      { label: "a boolean", value: true },
    ],
    boolean: [
      { label: "the string yes", value: "yes" },
      { label: "the number 1", value: 1 },
    ],
    enum: [{ label: "a number", value: 7 }],
    literal: [{ label: "a number", value: 7 }],
    union: [
      { label: "a string", value: "x" },
      { label: "an array", value: [1] },
    ],
    array: [
      { label: "a string", value: "x" },
      { label: "an object", value: { 0: "a" } },
      { label: "an array of objects", value: [{}] },
    ],
    object: [
      { label: "a string", value: "x" },
      { label: "an array", value: [1] },
    ],
    record: [
      { label: "a number", value: 5 },
      { label: "a string", value: "x" },
    ],
    other: [{ label: "an object", value: { x: 1 } }],
  };
  return [...w[info.kind], ...(info.nullable ? [] : [{ label: "null", value: null }])];
}

// ---------------------------------------------------------------------------------------------
// What each route needs to be reached: real params, a valid body, a valid query
// ---------------------------------------------------------------------------------------------

interface Fixture {
  /** Params of records that exist, so a bad body or query is what gets refused. */
  params?: Record<string, string>;
  query?: string;
  body?: unknown;
  /**
   * For a create route (no record to point at): a change that makes the service refuse the body
   * after validation (a taken key, a reference that does not exist), and the fields it uses. Free
   * text with hostile content goes in with it, so the text travels through the service without
   * creating anything. null: no such refusal exists; the hostile-text cases are not sent.
   */
  refuse?: { body: (b: any) => unknown; uses: string[] } | null;
  /** The body schema accepts {} (all optional): bodies that do not parse go to an absent record. */
  emptyBodyOk?: string;
  /** A read that writes when it succeeds (why): its legal hostile requests go to an absent record. */
  writesOnRead?: string;
}
let fixtures: Record<string, Fixture>;
let tinyPng: Buffer;
const FEED_ROW = { heat_no: "FUZZ-FEED-1", caster: "CC2", grade: "LV-ST32", cast_start: "2026-12-05T08:00:00Z", casting_speed_m_min: 1.4 };
const validCsv = () => Buffer.from("heat_no,caster,grade,cast_start,casting_speed_m_min\nFUZZ1,CC2,LV-ST32,2026-12-05T08:00:00Z,1.4\n");

/** An id that cannot exist, of the form the param takes. */
function absentParam(schema: z.ZodType): string | null {
  const info = inspect(schema);
  if (info.kind === "enum") return null;
  if (info.kind === "number") return "999999999";
  if (info.format === "uuid" || info.format === "guid") return "00000000-0000-4000-8000-00000000dead";
  return "FUZZ-ABSENT";
}

const fill = (p: string, params: Record<string, string>) => "/api" + p.replace(/:([A-Za-z0-9_]+)/g, (_, n: string) => params[n] ?? `:${n}`);
const encodeAll = (params: Record<string, string>) => Object.fromEntries(Object.entries(params).map(([k, v]) => [k, encodeURIComponent(v)]));

function absentParams(route: AnyRoute, fx: Fixture): Record<string, string> | null {
  const shape = route.params ? shapeOf(route.params) : {};
  const out: Record<string, string> = { ...encodeAll(fx.params ?? {}) };
  let changed = false;
  for (const [n, s] of Object.entries(shape)) {
    const a = absentParam(s);
    if (a !== null) ((out[n] = a), (changed = true));
  }
  return changed ? out : null;
}

function start(route: AnyRoute, url: string, method: Method = route.method): request.Test {
  if (route.access === "ingest.token") return request(server)[method](url).set("Authorization", `Bearer ${token}`);
  return admin[method](url).set("Origin", origin);
}
function withQuery(url: string, qs: string | undefined) {
  return qs ? `${url}?${qs}` : url;
}
/** The route's valid payload: its JSON body or, for uploads, a valid file. */
function payload(route: AnyRoute, fx: Fixture, req: request.Test): request.Test {
  if (route.upload) {
    if (route.path.startsWith("/import")) return req.attach("file", validCsv(), "heats.csv");
    if (route.path.endsWith("/photos")) return req.attach("photos", tinyPng, "fuzz.png");
    return req.attach("files", Buffer.from("fuzz note\n"), "fuzz-note.txt");
  }
  if (fx.body !== undefined) return req.set("Content-Type", "application/json").send(json(fx.body));
  return req;
}

// ---------------------------------------------------------------------------------------------
// The rules: which generated requests must be refused, and why
// ---------------------------------------------------------------------------------------------

const WHY = {
  path: "no id, code or kind in the API takes this form, and none exists with it: 400 (validation) or 404 (no such record)",
  bodyType: "every JSON body here is an object (the feed: an array of objects); the parser is strict",
  fieldType: "a field of the wrong JSON type fails the route's zod schema",
  missing: "a required field is missing",
  huge: "no text field of the API is meant to hold 100,000 characters",
  number: "no quantity of the API may be NaN, infinite or −1e9",
  enumValue: "a closed vocabulary does not take unknown words",
  hostileText: "the text is legal, but the record it is aimed at does not exist or its key is taken, so the service must refuse it after reading it",
  prototype: "__proto__ / constructor keys are stripped; the record aimed at does not exist",
  contentType: "the body is not JSON by its content type, so it is not read; what is left misses the required fields",
  malformed: "the JSON does not parse",
  tooLarge: "the body is over the JSON limit",
  multipartToJson: "a JSON route does not read multipart bodies; what is left misses the required fields",
  truncated: "the multipart body ends before its closing boundary",
  wrongField: "the file is sent under a field name the route does not read",
  spoofed: "the file's content is not the kind its name claims",
  empty: "an empty file is nothing to store or import",
  noFile: "an upload route needs a file",
  tooMany: "more files than the route takes",
  activeName: "a name that runs as a program or renders script when opened (.bat, .hta, .svg, .html …) is refused whatever the content",
  queryType: "a query value of the wrong type fails the route's zod schema",
  queryHuge: "no query value of the API is meant to hold 5,000 characters",
  queryNumber: "NaN, infinite, non-numeric and out-of-range numbers fail the query schema",
  queryEnum: "a closed vocabulary does not take unknown words",
  querySearch: "free text in a query (a search, a filter) may hold anything; it must be read as text, never as SQL or a path",
  queryUnknownKey: "unknown query keys are ignored",
  queryRange: "before-after's aMin/aMax/bMin/bMax bound a variable's range and may be any finite number",
  ingestRows: "rows with errors are refused whole (422): nothing is imported",
  ingestDry: "a dry run checks hostile rows and reports them; it writes nothing",
  importDry: "a dry run of a file with hostile cells checks it and writes nothing",
  bulkDry: "a bulk tagging dry run counts, it writes nothing",
} as const;

function add(route: AnyRoute, kind: string, what: string, expect: Expect, why: string, send: () => request.Test, field?: string) {
  cases.push({ route: key(route), kind, what, expect, why, send, field });
}

function buildCases() {
  for (const route of routes()) {
    const fx = fixtures[key(route)]!;
    const params = encodeAll(fx.params ?? {});
    const url = fill(route.path, params);
    const absentP = absentParams(route, fx);
    /** The route's URL aimed at records that do not exist (null: the route has no record param). */
    const absent = absentP ? fill(route.path, absentP) : null;

    // -- path params ----------------------------------------------------------------------------
    for (const name of Object.keys(route.params ? shapeOf(route.params) : {})) {
      for (const v of PATH_VALUES) {
        add(route, "path-param", `:${name} = ${v.label}`, "refused", WHY.path, () =>
          payload(route, fx, start(route, withQuery(fill(route.path, { ...params, [name]: v.raw }), fx.query))),
        );
      }
    }

    // -- query ---------------------------------------------------------------------------------
    if (route.query) {
      const body = (req: request.Test) => payload(route, fx, req);
      const q = (mutate: (p: URLSearchParams) => void) => {
        const p = new URLSearchParams(fx.query ?? "");
        mutate(p);
        // A read that writes when it succeeds takes its legal hostile queries at an absent record.
        return withQuery(fx.writesOnRead && absent ? absent : url, p.toString());
      };
      add(route, "query", "an unknown key", "hostile-valid", WHY.queryUnknownKey, () =>
        body(
          start(
            route,
            q((p) => p.set("zz_unknown", "1")),
          ),
        ),
      );
      for (const [name, field] of Object.entries(shapeOf(route.query))) {
        const info = inspect(field);
        const set = (v: string) => () =>
          body(
            start(
              route,
              q((p) => p.set(name, v)),
            ),
          );
        add(
          route,
          "query",
          `${name} given twice (an array)`,
          "refused",
          WHY.queryType,
          () =>
            body(
              start(
                route,
                q((p) => (p.set(name, "1"), p.append(name, "2"))),
              ),
            ),
          name,
        );
        if (info.kind === "number") {
          for (const v of ["abc", "NaN", "1e309"]) add(route, "query", `${name} = ${v}`, "refused", WHY.queryNumber, set(v), name);
          const rangeBound = route.path.startsWith("/reports/before-after") && /^[ab]M(in|ax)$/.test(name);
          if (rangeBound) add(route, "query", `${name} = -1e9`, "hostile-valid", WHY.queryRange, set("-1e9"));
          else add(route, "query", `${name} = -1e9`, "refused", WHY.queryNumber, set("-1e9"), name);
        } else if (info.kind === "enum" || info.kind === "literal") {
          add(route, "query", `${name} = an unknown word`, "refused", WHY.queryEnum, set("zz-not-a-value"), name);
        } else if (info.kind === "string") {
          add(route, "query", `${name} = 5,000 characters`, "refused", WHY.queryHuge, set("q".repeat(5_000)), name);
          for (const v of [...SQL, TRAVERSAL, UNICODE]) add(route, "query", `${name} = ${JSON.stringify(v)}`, "hostile-valid", WHY.querySearch, set(v));
        }
      }
    }

    // -- JSON bodies ---------------------------------------------------------------------------
    if (route.access !== "ingest.token") {
      // The body parser runs before any route (GETs included), with or without a body schema.
      add(route, "malformed-json", '{"a":', "refused", WHY.malformed, () =>
        start(route, withQuery(url, fx.query)).set("Content-Type", "application/json").send('{"a":'),
      );
    }
    if (!route.query && route.method === "get") {
      // Reads only: on a write the same request would be a valid one, and write.
      const qs = new URLSearchParams({ ...Object.fromEntries(new URLSearchParams(fx.query ?? "")), [SQL[0]]: SQL[1] }).toString();
      if (fx.writesOnRead) {
        if (!absent) throw new Error(`${key(route)}: writesOnRead needs a record param to aim at`);
        add(
          route,
          "query",
          "an unknown key with SQL in it, at an absent record",
          "refused",
          `${WHY.queryUnknownKey}; ${fx.writesOnRead}, so it is aimed at a record that does not exist`,
          () => start(route, withQuery(absent, qs)),
        );
      } else {
        add(route, "query", "an unknown key with SQL in it", "hostile-valid", WHY.queryUnknownKey, () => payload(route, fx, start(route, withQuery(url, qs))));
      }
    }
    if (route.method !== "get" && !route.upload && route.access !== "ingest.token") {
      add(route, "too-large", "a 2.1 MB JSON body", "refused", WHY.tooLarge, () =>
        start(route, withQuery(url, fx.query))
          .set("Content-Type", "application/json")
          .send(json({ pad: "x".repeat(2_100_000) })),
      );
    }
    if (route.body && route.access !== "ingest.token") {
      const post =
        (body: string, to = url, type = "application/json") =>
        () =>
          start(route, withQuery(to, fx.query)).set("Content-Type", type).send(body);
      for (const [label, raw] of [
        ["an array", "[1,2]"],
        ["an empty array", "[]"],
        ["a string", '"text"'],
        ["a number", "42"],
        ["null", "null"],
        ["true", "true"],
      ] as const) {
        add(route, "body-type", `the body is ${label}`, "refused", WHY.bodyType, post(raw));
      }
      // Bodies that are not read as JSON leave {}: refused unless {} is a legal body.
      const unread = fx.emptyBodyOk ? absent : url;
      if (!unread) throw new Error(`${key(route)}: emptyBodyOk needs a record param to aim at`);
      const baseJson = json(fx.body);
      for (const type of ["text/plain", "application/xml", "application/json; charset=utf-16"]) {
        add(route, "content-type", `${type} with a JSON body`, "refused", WHY.contentType, post(baseJson, unread, type));
      }
      add(route, "content-type", "x-www-form-urlencoded", "refused", WHY.contentType, () => {
        const form = new URLSearchParams();
        for (const [k, v] of Object.entries(fx.body as object)) form.set(k, typeof v === "object" ? JSON.stringify(v) : String(v));
        return start(route, withQuery(unread, fx.query)).set("Content-Type", "application/x-www-form-urlencoded").send(form.toString());
      });
      add(route, "multipart-to-json", "a multipart form with a file", "refused", WHY.multipartToJson, () => {
        let req = start(route, withQuery(unread, fx.query));
        for (const [k, v] of Object.entries(fx.body as object)) req = req.field(k, typeof v === "object" ? JSON.stringify(v) : String(v));
        return req.attach("file", Buffer.from("{}"), "body.json");
      });

      // Field by field, from the schema, on top of the valid body.
      for (const { path: p, info } of fieldsOf(route.body, fx.body)) {
        const name = p.join(".");
        const mutated = (v: unknown) => json(setAt(fx.body, p, v));
        for (const w of wrongTypes(info)) add(route, "field-type", `${name} = ${w.label}`, "refused", WHY.fieldType, post(mutated(w.value)), name);
        if (!info.optional) add(route, "missing-field", `without ${name}`, "refused", WHY.missing, post(json(setAt(fx.body, p, undefined, true))), name);
        if (info.kind === "string") add(route, "huge-string", `${name} = 100,000 characters`, "refused", WHY.huge, post(mutated(HUGE_BODY_STRING)), name);
        if (info.kind === "number") {
          add(route, "bad-number", `${name} = "NaN"`, "refused", WHY.number, post(mutated("NaN")), name);
          add(route, "bad-number", `${name} = -1e9`, "refused", WHY.number, post(mutated(-1e9)), name);
          add(route, "bad-number", `${name} = 1e309`, "refused", WHY.number, post(mutated(INF)), name);
        }
        if (info.kind === "enum" || info.kind === "literal" || (info.kind === "union" && typeof getAt(fx.body, p) !== "object")) {
          add(route, "unknown-enum", `${name} = an unknown word`, "refused", WHY.enumValue, post(mutated("zz-not-a-value")), name);
          add(route, "unknown-enum", `${name} = 99`, "refused", WHY.enumValue, post(mutated(99)), name);
        }
        if (info.kind === "array") {
          const el = inspect(elementOf(info.schema));
          if (el.kind === "number") {
            add(route, "bad-number", `${name} = [-1e9]`, "refused", WHY.number, post(mutated([-1e9])), name);
            add(route, "bad-number", `${name} = ["NaN"]`, "refused", WHY.number, post(mutated(["NaN"])), name);
          }
          if (el.kind === "string") add(route, "huge-string", `${name} = [100,000 characters]`, "refused", WHY.huge, post(mutated([HUGE_BODY_STRING])), name);
          if (el.kind === "enum") add(route, "unknown-enum", `${name} = [an unknown word]`, "refused", WHY.enumValue, post(mutated(["zz-not-a-value"])), name);
        }

        // Hostile text: legal strings, aimed where the service has to refuse them.
        const textual = info.kind === "string" || (info.kind === "array" && inspect(elementOf(info.schema)).kind === "string");
        if (!textual) continue;
        const values = info.kind === "string" ? [...SQL, TRAVERSAL, UNICODE] : [[SQL[0]], [TRAVERSAL]];
        for (const v of values) {
          const what = `${name} = ${JSON.stringify(v)}`;
          if (absent) {
            add(route, "hostile-text", `${what}, at an absent record`, "refused", WHY.hostileText, post(mutated(v), absent));
          } else if (fx.refuse && !fx.refuse.uses.includes(String(p[0]))) {
            add(
              route,
              "hostile-text",
              `${what}, with a taken key or an absent reference`,
              "refused",
              WHY.hostileText,
              post(json(setAt(fx.refuse.body(fx.body), p, v))),
            );
          } else if (key(route) === "POST /causes/bulk") {
            add(route, "hostile-text", `${what}, in a dry run`, "hostile-valid", WHY.bulkDry, post(mutated(v)));
          } else {
            notSent.push(
              `${key(route)} ${what}: ${fx.refuse === null ? "nothing makes this write fail after validation" : "this field is the one the refusal uses"}; the text is legal and a real create would write`,
            );
          }
        }
      }
      const proto = '{"__proto__":{"polluted":true},"constructor":{"prototype":{"polluted":true}},' + json(fx.body).slice(1);
      if (absent) add(route, "hostile-text", "__proto__ and constructor keys, at an absent record", "refused", WHY.prototype, post(proto, absent));
    }

    // -- uploads -------------------------------------------------------------------------------
    if (route.upload) {
      const field = route.path.startsWith("/import") ? "file" : route.path.endsWith("/photos") ? "photos" : "files";
      const to = () => start(route, withQuery(url, route.path.startsWith("/import") ? "" : fx.query));
      const boundary = "----fuzzboundary7MA4YWxkTrZu0gW";
      add(route, "multipart-truncated", "a boundary that never closes", "refused", WHY.truncated, () =>
        to()
          .set("Content-Type", `multipart/form-data; boundary=${boundary}`)
          .send(
            Buffer.from(
              `--${boundary}\r\nContent-Disposition: form-data; name="${field}"; filename="a.csv"\r\nContent-Type: text/csv\r\n\r\nheat_no,caster\nH1,CC2\n`,
            ),
          ),
      );
      add(route, "multipart-truncated", "headers that never end", "refused", WHY.truncated, () =>
        to()
          .set("Content-Type", `multipart/form-data; boundary=${boundary}`)
          .send(Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="${field}"`)),
      );
      add(route, "multipart-truncated", "multipart without a boundary", "refused", WHY.truncated, () =>
        to().set("Content-Type", "multipart/form-data").send(Buffer.from("--x\r\n\r\n")),
      );
      add(route, "multipart-field", "the file under the wrong field name", "refused", WHY.wrongField, () =>
        to().attach("wrong_field", validCsv(), "heats.csv"),
      );
      const junk = Buffer.from([0x4d, 0x5a, 0x90, 0x00, 0x03, 0x00, 0x00, 0x00, 0x04, 0x00, 0xff, 0xff, 0x00, 0x00, 0xb8]);
      add(route, "multipart-spoofed", "../../../../tmp/evil.jpg holding a DOS executable header", "refused", WHY.spoofed, () =>
        to().attach(field, junk, { filename: "../../../../tmp/evil.jpg", contentType: "image/jpeg" }),
      );
      add(route, "multipart-spoofed", "../../../../tmp/evil.jpg holding plain text", "refused", WHY.spoofed, () =>
        to().attach(field, Buffer.from("this is not a JPEG\n"), { filename: "../../../../tmp/evil.jpg", contentType: "image/jpeg" }),
      );
      add(route, "multipart-spoofed", "..\\..\\evil.xlsx holding an HTML page", "refused", WHY.spoofed, () =>
        to().attach(field, Buffer.from("<html><script>alert(1)</script></html>"), {
          filename: "..\\..\\evil.xlsx",
          contentType: "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet",
        }),
      );
      add(route, "multipart-empty", "an empty file", "refused", WHY.empty, () => to().attach(field, Buffer.alloc(0), "empty.csv"));
      add(route, "multipart-empty", "a form with no file", "refused", WHY.noFile, () => to().field("note", "no file here"));
      add(route, "multipart-empty", "a JSON body instead of a form", "refused", WHY.noFile, () =>
        to()
          .set("Content-Type", "application/json")
          .send(json({ [field]: "x" })),
      );
      add(route, "multipart-too-many", "one file more than the route takes", "refused", WHY.tooMany, () => {
        let req = to();
        for (let i = 0; i < (field === "file" ? 2 : field === "photos" ? 11 : 6); i++)
          req = req.attach(field, field === "photos" ? tinyPng : validCsv(), `f${i}.csv`);
        return req;
      });
      if (field === "files") {
        add(route, "multipart-active-name", "evidence.bat holding plain text", "refused", WHY.activeName, () =>
          to().attach(field, Buffer.from("@echo off\r\n"), "evidence.bat"),
        );
        add(route, "multipart-active-name", "x.svg holding an SVG with an onload script", "refused", WHY.activeName, () =>
          to().attach(field, Buffer.from('<svg xmlns="http://www.w3.org/2000/svg" onload="alert(1)"/>'), "x.svg"),
        );
        add(route, "multipart-active-name", "poly.jpg.html: a PNG with an HTML page after it", "refused", WHY.activeName, () =>
          to().attach(field, Buffer.concat([tinyPng, Buffer.from("<html><script>alert(1)</script></html>")]), "poly.jpg.html"),
        );
      }
      if (field === "file") {
        const hostileCsv = Buffer.from(
          `heat_no,caster,grade,cast_start,casting_speed_m_min\n"${SQL[0]}",CC2,LV-ST32,2026-12-05T08:00:00Z,1.4\n"${SQL[1]}",${TRAVERSAL},"${UNICODE}",2026-12-05T09:00:00Z,1.4\n`,
        );
        add(route, "hostile-text", "a CSV with SQL, traversal and unicode cells, dry run", "hostile-valid", WHY.importDry, () =>
          start(route, withQuery(url, "dryRun=true")).attach("file", hostileCsv, "hostile.csv"),
        );
      }
    }

    // -- the level-2 feed ----------------------------------------------------------------------
    if (route.access === "ingest.token") {
      const feed =
        (body: string, qs = "", type = "application/json") =>
        () =>
          start(route, withQuery(url, qs)).set("Content-Type", type).send(body);
      for (const [label, raw] of [
        ["an object", "{}"],
        ["an object with rows", '{"rows":[]}'],
        ["a string", '"text"'],
        ["a number", "42"],
        ["null", "null"],
        ["an array of numbers", "[1,2]"],
        ["an array of null", "[null]"],
        ["an array of arrays", "[[1]]"],
        ["an empty array", "[]"],
      ] as const) {
        add(route, "body-type", `the body is ${label}`, "refused", WHY.bodyType, feed(raw));
      }
      add(route, "malformed-json", '[{"a":', "refused", WHY.malformed, feed('[{"a":'));
      add(route, "too-large", "a 21 MB JSON body", "refused", WHY.tooLarge, feed(json([{ heat_no: "x".repeat(21 * 1024 * 1024) }])));
      const baseRow = FEED_ROW;
      for (const type of ["text/plain", "application/xml", "application/x-www-form-urlencoded"]) {
        add(route, "content-type", `${type} with a JSON body`, "refused", WHY.contentType, feed(json([baseRow]), "", type));
      }
      add(route, "multipart-to-json", "a multipart form with a file", "refused", WHY.multipartToJson, () =>
        start(route, url).attach("file", validCsv(), "heats.csv"),
      );
      const rows = (row: unknown) => json([row]);
      for (const k of ["heat_no", "caster", "grade", "cast_start", "casting_speed_m_min"]) {
        add(route, "missing-field", `a row without ${k}`, "refused", WHY.ingestRows, feed(rows(setAt(baseRow, [k], undefined, true))));
      }
      for (const [label, v] of [
        ['"NaN"', "NaN"],
        ["-1e9", -1e9],
        ["1e309", INF],
        ['"abc"', "abc"],
        ["true", true],
        ["100,000 characters", HUGE_BODY_STRING],
      ] as const) {
        add(route, "bad-number", `casting_speed_m_min = ${label}`, "refused", WHY.ingestRows, feed(rows({ ...baseRow, casting_speed_m_min: v })));
      }
      add(route, "field-type", "cast_start = not a date", "refused", WHY.ingestRows, feed(rows({ ...baseRow, cast_start: "yesterday" })));
      add(route, "field-type", "a nested object in a cell", "refused", WHY.ingestRows, feed(rows({ ...baseRow, grade: { code: "LV-ST32" } })));
      add(route, "huge-string", "heat_no = 100,000 characters", "refused", WHY.ingestRows, feed(rows({ ...baseRow, heat_no: HUGE_BODY_STRING })));
      add(route, "unknown-enum", "caster = an unknown code", "refused", WHY.ingestRows, feed(rows({ ...baseRow, caster: "ZZ9" })));
      add(route, "unknown-enum", "grade = an unknown code", "refused", WHY.ingestRows, feed(rows({ ...baseRow, grade: "ZZ-NOPE" })));
      add(route, "unknown-enum", "an unknown column", "refused", WHY.ingestRows, feed(rows({ ...baseRow, zz_unknown_column: 1 })));
      for (const kind of ["slabs", "process-samples", "products"]) {
        add(route, "missing-field", `${kind}: a row with nothing but an unknown column`, "refused", WHY.ingestRows, () =>
          start(route, fill(route.path, { kind }))
            .set("Content-Type", "application/json")
            .send(rows({ zz: 1 })),
        );
      }
      for (const k of ["heat_no", "caster", "grade"]) {
        for (const v of [...SQL, TRAVERSAL, UNICODE]) {
          add(route, "hostile-text", `${k} = ${JSON.stringify(v)}, dry run`, "hostile-valid", WHY.ingestDry, feed(rows({ ...baseRow, [k]: v }), "dryRun=true"));
        }
      }
    }
  }
}

// ---------------------------------------------------------------------------------------------
// Nothing written: every table's rows and every file under UPLOAD_DIR
// ---------------------------------------------------------------------------------------------

/**
 * Left out of the content digest (their row counts are still compared):
 *  - session: better-auth moves a session's expiry forward on reads (the sliding session).
 *  - api_tokens.last_used_at: stamped by design on every call made with the token.
 */
const DIGEST_SKIP_TABLES = new Set(["session"]);
const DIGEST_SKIP_COLUMNS: Record<string, string[]> = { api_tokens: ["last_used_at"] };

function snapshot() {
  const sqlite = t.db.$client;
  const tables = sqlite.prepare("select name from sqlite_master where type = 'table' order by name").pluck().all() as string[];
  const counts: Record<string, number> = {};
  const digests: Record<string, string> = {};
  for (const name of tables) {
    counts[name] = sqlite.prepare(`select count(*) from "${name}"`).pluck().get() as number;
    if (DIGEST_SKIP_TABLES.has(name)) continue;
    const skip = DIGEST_SKIP_COLUMNS[name] ?? [];
    const lines = (sqlite.prepare(`select * from "${name}"`).raw(false).all() as Record<string, unknown>[]).map((r) => {
      for (const c of skip) delete r[c];
      return JSON.stringify(r, (_k, v) =>
        Buffer.isBuffer(v) || v?.type === "Buffer" ? crypto.createHash("sha1").update(Buffer.from(v)).digest("hex") : typeof v === "bigint" ? String(v) : v,
      );
    });
    digests[name] = crypto.createHash("sha256").update(lines.sort().join("\n")).digest("hex");
  }
  const files: string[] = [];
  const walk = (dir: string) => {
    if (!fs.existsSync(dir)) return;
    for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
      const full = path.join(dir, e.name);
      if (e.isDirectory()) walk(full);
      else files.push(`${path.relative(t.env.UPLOAD_DIR, full)} ${fs.statSync(full).size}`);
    }
  };
  walk(t.env.UPLOAD_DIR);
  return { counts, digests, files: files.sort() };
}

// ---------------------------------------------------------------------------------------------

const one = (sql: string, ...args: unknown[]) =>
  t.db.$client
    .prepare(sql)
    .pluck()
    .get(...args) as any;
const run = (sql: string, ...args: unknown[]) => Number(t.db.$client.prepare(sql).run(...args).lastInsertRowid);

beforeAll(async () => {
  t = await createTestApp({ scale: 0.01 });
  origin = t.env.BETTER_AUTH_URL;
  server = t.app.listen(0, "127.0.0.1");
  await new Promise<void>((resolve) => server.once("listening", () => resolve()));
  // As agentFor does, but against the listening server.
  admin = request.agent(server);
  const signIn = await admin.post("/api/auth/sign-in/email").set("Origin", origin).send({ email: "admin@demo.test", password: TEST_PASSWORD });
  if (signIn.status !== 200) throw new Error(`sign-in: ${signIn.status}`);
  const sharp = (await import("sharp")).default;
  tinyPng = await sharp({ create: { width: 8, height: 8, channels: 3, background: "#468" } })
    .png()
    .toBuffer();

  const created = await admin
    .post("/api/admin/tokens")
    .set("Origin", origin)
    .send({ name: "fuzz feed", scopes: ["heats", "slabs", "process-samples", "products"] });
  if (created.status !== 201) throw new Error(`token: ${created.status} ${JSON.stringify(created.body)}`);
  token = created.body.token;

  // Records for every param to point at (SQL: set up before the "before" snapshot).
  const userId = (role: string) => one("select id from user where email = ?", `${role}@demo.test`);
  const heatNo = one("select heat_no from heats order by id limit 1") as string;
  const slabId = one("select slab_id from slabs order by id limit 1") as string;
  const slabRow = one("select id from slabs order by id limit 1") as number;
  const defectId = one(
    "select d.id from defects d join user u on u.id = d.created_by where u.email = 'inspector@demo.test' and d.deleted_at is null order by d.id limit 1",
  ) as number;
  const strandId = one("select id from strands order by id limit 1") as number;
  const casterCode = one("select code from casters order by id limit 1") as string;
  const tokenId = run("insert into api_tokens (name, token_hash, prefix) values ('fuzz target', 'fuzz-hash', 'ssk_f')");
  const savedId = run(
    "insert into saved_reports (user_id, name, report_kind, query, created_at, updated_at) values (?, 'fuzz', 'overview', 'period=week', 0, 0)",
    userId("admin"),
  );
  run("insert into cause_tags (code, name, group_id) values ('fuzz-tag', 'Fuzz tag', (select id from cause_groups where code = 'process'))");
  const linkId = run(
    "insert into defect_causes (defect_id, tag_id, confidence) values (?, (select id from cause_tags where code = 'sen-clogging'), 'suspected')",
    defectId,
  );
  const inv = run(
    "insert into investigations (ref, title, problem_statement, status, owner_id, opened_at, created_by) values ('INV-FUZZ-1', 'Fuzz', 'Fuzz investigation problem', 'open', ?, ?, ?)",
    userId("process"),
    Date.now(),
    userId("process"),
  );
  const hid = run("insert into investigation_hypotheses (investigation_id, statement) values (?, 'Fuzz hypothesis')", inv);
  const aid = run(
    "insert into investigation_actions (investigation_id, description, owner_id, due_on) values (?, 'Fuzz action', ?, '2026-12-31')",
    inv,
    userId("process"),
  );
  const claim = run(
    "insert into claims (claim_no, customer, received_on, defect_complained, status) values ('CL-FUZZ-1', 'Fuzz customer', '2026-11-30', 'Slivers', 'new')",
  );
  run("insert into claim_slabs (claim_id, slab_id, linked_via) values (?, ?, 'search')", claim, slabRow);
  const outboxId = run(
    "insert into email_outbox (kind, from_address, to_addresses, subject, text_body, status, attempts) values ('invitation', 'a@b.test', 'c@d.test', 'Fuzz', 'Body', 'failed', 6)",
  );
  const photoId = "00000000-0000-4000-8000-00000000f001";
  fs.mkdirSync(path.join(t.env.UPLOAD_DIR, "photos"), { recursive: true });
  const webp = await sharp(tinyPng).webp().toBuffer();
  fs.writeFileSync(path.join(t.env.UPLOAD_DIR, "photos", `${photoId}.webp`), webp);
  fs.writeFileSync(path.join(t.env.UPLOAD_DIR, "photos", `${photoId}.thumb.jpg`), await sharp(tinyPng).jpeg().toBuffer());
  run(
    "insert into defect_photos (id, defect_id, display_file, display_mime, thumb_file, width, height, bytes, sha256) values (?, ?, ?, 'image/webp', ?, 8, 8, ?, 'x')",
    photoId,
    defectId,
    `photos/${photoId}.webp`,
    `photos/${photoId}.thumb.jpg`,
    webp.length,
  );
  const attachmentId = "00000000-0000-4000-8000-00000000a001";
  fs.mkdirSync(path.join(t.env.UPLOAD_DIR, "attachments"), { recursive: true });
  fs.writeFileSync(path.join(t.env.UPLOAD_DIR, "attachments", attachmentId), "fuzz note\n");
  run(
    "insert into attachments (id, owner_kind, owner_id, file_name, stored_file, mime, bytes, sha256) values (?, 'investigation', ?, 'note.txt', ?, 'text/plain', 10, 'x')",
    attachmentId,
    inv,
    attachmentId,
  );

  // A risk model version whose training failed: it can be read, and switching it on is refused (409) without a write.
  const riskModelId = run(
    'insert into risk_models (target_kind, target_code, version, spec, status, error) values (\'type\', \'SLG\', 99, \'{"targetKind":"type","targetCode":"SLG","conditions":[],"categories":["grade_family"],"knots":4}\', \'failed\', \'Fuzz: not trained\')',
  );
  // A live operating window rule to change and retire (every fuzz case on it is refused, so it stays as it is).
  const windowId = run(
    "insert into operating_windows (name, conditions) values ('Fuzz rule', ?)",
    JSON.stringify([{ variable: "casting_speed_m_min", op: "above", value: 1.6 }]),
  );
  const id = (v: number | string) => ({ id: String(v) });
  const REPORT_QUERIES: Record<string, string> = {
    overview: "period=week",
    "rate-by-variable": "variable=casting_speed_m_min",
    screening: "defectType=SLG",
    "process-window": "x=casting_speed_m_min&y=embr_current_a",
    "control-chart": "defectType=SLG",
    "before-after": "mode=periods&aFrom=2026-04-01&aTo=2026-06-30&bFrom=2026-07-01&bTo=2026-11-30",
    "slab-positions": "defectType=LFC",
    "cause-pareto": "minConfidence=probable",
    adjusted: "defectType=SLG&variables=casting_speed_m_min,mold_level_sd_mm&adjustFor=grade_family",
  };
  const settings = {
    liquidus: { baseC: 1536, perPct: { c: 78, si: 7.6, mn: 4.9, p: 34.4, s: 38 }, source: "fuzz" },
    shellK: { moldMmPerSqrtMin: 20, strandMmPerSqrtMin: 27 },
    density: { solidTPerM3: 7.8, liquidTPerM3: 7.0 },
    steelProperties: { conductivitySPerM: 714000, densityKgPerM3: 7000, viscosityPaS: 0.0063 },
  };
  fixtures = {
    "GET /health": {},
    "GET /about": {},
    "GET /session": {},
    "GET /me": {},
    "GET /admin/users": {},
    "POST /admin/users": {
      body: { name: "Fuzz User", email: "fuzz-new@example.test", roles: ["inspector"], password: "long-enough-pw" },
      refuse: { body: (b) => ({ ...b, email: "admin@demo.test" }), uses: ["email"] },
    },
    "PATCH /admin/users/:id": { params: id(userId("claims")), body: { name: "Fuzz Name" } },
    "POST /admin/users/:id/unlock": { params: id(userId("claims")) },
    // Its one refusal after validation, a wrong current password, counts towards the account's sign-in
    // lock (audited when it locks): hostile text is not sent here (first-sign-in.test.ts covers that path).
    "PUT /me/language": { body: { language: "de" }, refuse: null },
    "POST /me/password": { body: { currentPassword: TEST_PASSWORD, newPassword: "fuzz-own-password-1" }, refuse: null },
    "GET /slabs/search": { query: "q=L26" },
    "GET /plant/summary": {},
    "GET /plant/setup": {},
    "GET /heats": { query: "pageSize=5" },
    "GET /heats/:heatNo": { params: { heatNo } },
    "GET /heats/:heatNo/samples": { params: { heatNo } },
    "GET /slabs/:slabId": { params: { slabId } },
    "POST /import/:kind": { params: { kind: "heats" }, query: "dryRun=true" },
    "GET /import/templates/:kind.xlsx": { params: { kind: "slabs" } },
    "GET /import/runs": {},
    "POST /ingest/:kind": { params: { kind: "heats" }, query: "dryRun=true", body: [FEED_ROW] },
    "GET /admin/sign-in": {},
    "PUT /admin/sign-in": { body: { groupRoles: [{ group: "fuzz-group", roles: ["quality"] }], localPasswords: "everyone" }, refuse: null },
    "GET /admin/tokens": {},
    "POST /admin/tokens": { body: { name: "fuzz" }, refuse: null },
    "DELETE /admin/tokens/:id": { params: id(tokenId) },
    "GET /plant/settings": {},
    "PUT /plant/settings": { body: settings, refuse: null },
    "PATCH /plant/strands/:id": { params: id(strandId), body: { embrPositionMm: 450 } },
    "POST /plant/casters": {
      body: {
        code: "FZC1",
        name: "Fuzz caster",
        worksName: "Fuzz works (invented)",
        strands: [
          {
            strandNo: 1,
            moldThicknessMm: 220,
            moldEffectiveLengthMm: 800,
            senPortAreaMm2: 6000,
            embrCalibration: { kind: "linear", teslaPerAmp: 0.0007, offsetT: 0 },
          },
        ],
      },
      refuse: { body: (b) => ({ ...b, code: casterCode }), uses: ["code"] },
    },
    "POST /plant/grade-families": { body: { code: "FZF", name: "Fuzz family" }, refuse: { body: (b) => ({ ...b, code: "PER" }), uses: ["code"] } },
    "PATCH /plant/grade-families/:code": { params: { code: "PER" }, body: { name: "Peritectic" } },
    "POST /plant/grades": { body: { code: "FZG", name: "Fuzz grade", familyCode: "LC" }, refuse: { body: (b) => ({ ...b, code: "LV-DQ10" }), uses: ["code"] } },
    "PATCH /plant/grades/:code": { params: { code: "LV-DQ10" }, body: { name: "Drawing quality" } },
    "POST /defects": {
      body: {
        slab_id: slabId,
        type_code: "SLG",
        face: "inner",
        position_along_mm: 100,
        position_across_mm: 100,
        severity: 1,
        disposition: "accept",
        client_key: "fuzz-key-0001",
      },
      refuse: { body: (b) => ({ ...b, slab_id: "FUZZ-NO-SLAB" }), uses: ["slab_id"] },
    },
    "GET /defects": { query: "pageSize=5" },
    "GET /defects/:id": { params: id(defectId) },
    "PATCH /defects/:id": { params: id(defectId), body: { note: "fuzz" } },
    "DELETE /defects/:id": { params: id(defectId) },
    "POST /defects/:id/review": { params: id(defectId), body: { decision: "confirm" } },
    "POST /defects/:id/photos": { params: id(defectId) },
    "GET /photos/:id": { params: id(photoId) },
    "GET /photos/:id/thumb": { params: id(photoId) },
    "DELETE /photos/:id": { params: id(photoId) },
    "GET /defect-types": { query: "includeRetired=true" },
    "POST /defect-types": {
      body: { code: "FZT", name: "Fuzz type", categoryCode: "SURFACE" },
      refuse: { body: (b) => ({ ...b, code: "SCB" }), uses: ["code"] },
    },
    "PATCH /defect-types/:code": { params: { code: "SCB" }, body: { name: "Scab" } },
    "POST /defect-categories": { body: { code: "FZCAT", name: "Fuzz category" }, refuse: { body: (b) => ({ ...b, code: "SURFACE" }), uses: ["code"] } },
    "PATCH /defect-categories/:code": { params: { code: "SURFACE" }, body: { name: "Surface" } },
    "GET /reports/variables": {},
    "GET /saved-reports": {},
    "POST /saved-reports": { body: { name: "fuzz report", reportKind: "overview", query: "period=week" }, refuse: null },
    "DELETE /saved-reports/:id": { params: id(savedId) },
    ...Object.fromEntries(
      Object.entries(REPORT_QUERIES).flatMap(([kind, query]) => [
        [`GET /reports/${kind}`, { query }],
        [`GET /reports/${kind}.xlsx`, { query }],
      ]),
    ),
    "GET /cause-tags": { query: "includeRetired=true" },
    "POST /cause-tags": {
      body: { code: "fuzz-new-tag", name: "Fuzz new tag", group: "equipment" },
      refuse: { body: (b) => ({ ...b, code: "sen-clogging" }), uses: ["code"] },
    },
    "PATCH /cause-tags/:code": { params: { code: "fuzz-tag" }, body: { name: "Fuzz renamed" } },
    "DELETE /cause-tags/:code": { params: { code: "fuzz-tag" } },
    "GET /defects/:id/causes": { params: id(defectId) },
    "POST /defects/:id/causes": { params: id(defectId), body: { tags: ["sen-clogging"], confidence: "suspected" } },
    "DELETE /defects/:id/causes/:linkId": {
      params: { id: String(defectId), linkId: String(linkId) },
      body: { reason: "fuzz" },
      emptyBodyOk: "the reason is optional",
    },
    "POST /causes/bulk": { body: { selection: { kind: "heat", heatNo }, tags: ["ladle-change"], confidence: "suspected", dryRun: true } },
    "GET /investigations": { query: "status=active" },
    "GET /investigations/people": {},
    "POST /investigations": {
      body: { title: "Fuzz opened", problemStatement: "Opened by the fuzz test.", heatNos: [heatNo] },
      refuse: { body: (b) => ({ ...b, heatNos: ["FUZZ-NO-HEAT"] }), uses: ["heatNos"] },
    },
    "GET /investigations/:id": { params: id(inv) },
    "PATCH /investigations/:id": { params: id(inv), body: { status: "in_progress" } },
    "POST /investigations/:id/subjects": { params: id(inv), body: { heatNos: [heatNo] } },
    "POST /investigations/:id/participants": { params: id(inv), body: { userIds: [userId("quality")] } },
    "POST /investigations/:id/hypotheses": { params: id(inv), body: { statement: "Fuzz hypothesis", causeTag: "sen-clogging" } },
    "PATCH /investigations/:id/hypotheses/:hid": { params: { id: String(inv), hid: String(hid) }, body: { status: "rejected" } },
    "POST /investigations/:id/actions": { params: id(inv), body: { description: "Fuzz action", ownerId: userId("process"), dueOn: "2026-12-31" } },
    "PATCH /investigations/:id/actions/:aid": { params: { id: String(inv), aid: String(aid) }, body: { status: "done" } },
    "POST /investigations/:id/close": { params: id(inv), body: { confirmedCause: "sen-clogging", closureNote: "Closed by the fuzz test." } },
    "POST /investigations/:id/attachments": { params: id(inv) },
    "GET /attachments/:id": { params: id(attachmentId) },
    "GET /admin/outbox": { query: "status=queued" },
    "POST /admin/outbox/:id/retry": { params: id(outboxId) },
    "GET /trace": { query: `q=${slabId}` },
    "GET /heats/:heatNo/history": { params: { heatNo } },
    "GET /heats/:heatNo/history.xlsx": { params: { heatNo }, writesOnRead: "every download of the workbook is audited" },
    "GET /claims": { query: "status=new" },
    "POST /claims": {
      body: { claimNo: "CL-FUZZ-NEW", customer: "Fuzz customer", receivedOn: "2026-11-30", defectComplained: "Slivers" },
      refuse: { body: (b) => ({ ...b, claimNo: "CL-FUZZ-1" }), uses: ["claimNo"] },
    },
    "GET /claims/:id": { params: id(claim) },
    "PATCH /claims/:id": { params: id(claim), body: { status: "under_review" } },
    "POST /claims/:id/slabs": { params: id(claim), body: { slabIds: [slabId] } },
    "DELETE /claims/:id/slabs/:slabId": { params: { id: String(claim), slabId } },
    "POST /claims/:id/attachments": { params: id(claim) },
    "POST /claims/:id/send-history": { params: id(claim), body: { heatNo, to: ["customer@example.test"] } },
    "GET /yard/sync": {},
    "GET /yard/slabs/:slabId": { params: { slabId } },
    "GET /yard/settings": {},
    "PUT /yard/settings": { body: { syncWindowHours: 48 }, refuse: null },
    "POST /risk-models": {
      body: { targetKind: "type", targetCode: "SLG", conditions: ["mold_level_sd_mm"], categories: ["grade_family"], knots: 4 },
      refuse: { body: (b) => ({ ...b, targetCode: "FUZZ-NO-SUCH-TYPE" }), uses: ["targetCode"] },
    },
    "GET /risk-models": {},
    "GET /risk-models/:id": { params: id(riskModelId) },
    "GET /risk-models/:id/drift": { params: id(riskModelId) },
    "POST /risk-models/:id/activate": { params: id(riskModelId) },
    "GET /risk/slabs": { query: "uninspected=true" },
    "GET /operating-windows": { query: "includeRetired=false" },
    "POST /operating-windows": {
      body: {
        name: "Fuzz window",
        familyCode: "LC",
        target: { kind: "type", code: "SLG" },
        conditions: [{ variable: "casting_speed_m_min", op: "above", value: 1.6 }],
        note: "Fuzz.",
      },
      refuse: { body: (b) => ({ ...b, familyCode: "FUZZ-NO-FAMILY" }), uses: ["familyCode"] },
    },
    "PATCH /operating-windows/:id": { params: id(windowId), body: { note: "Fuzz changed." } },
    "DELETE /operating-windows/:id": { params: id(windowId) },
    "GET /operating-windows/flags": { query: `slabIds=${slabId}` },
  };
});
afterAll(async () => {
  if (server) await new Promise<void>((resolve) => server.close(() => resolve()));
  await t?.close();
});

const results: { c: Case; status: number }[] = [];

describe("bad-input fuzz", () => {
  it("when the app is built, then every route has a fuzz fixture, and every fixture a route", () => {
    expect(routes().map(key).sort()).toEqual(Object.keys(fixtures).sort());
  });

  it(
    "when every route gets malformed requests, then each is refused with a 4xx error envelope (or, if legal, answered without a 5xx) and nothing is written",
    { timeout: 180_000 },
    async () => {
      buildCases();
      const before = snapshot();
      const failures: string[] = [];
      for (const c of cases) {
        const res = await c.send();
        results.push({ c, status: res.status });
        const what = `${c.route} [${c.kind}] ${c.what} → ${res.status} ${String(res.headers["content-type"])} ${JSON.stringify(res.body).slice(0, 160)}`;
        const isJson = /^application\/json/.test(String(res.headers["content-type"] ?? ""));
        const envelope = isJson && typeof res.body?.error?.code === "string" && typeof res.body?.error?.message === "string";
        const named = (res.body?.error?.details ?? []) as { path?: string }[];
        if (res.status >= 500) failures.push(`5xx: ${what}`);
        else if (c.expect === "refused" && (res.status < 400 || res.status > 499)) failures.push(`not refused: ${what}`);
        else if (res.status >= 400 && !envelope) failures.push(`no error envelope: ${what}`);
        else if (
          c.field &&
          (res.status !== 400 || res.body.error.code !== "validation_failed" || !named.some((d) => d.path === c.field || d.path?.startsWith(`${c.field}.`)))
        ) {
          failures.push(`refused, but not by the schema for ${c.field}: ${what}`);
        } else if (res.status < 400) {
          const route = routes().find((r) => key(r) === c.route)!;
          const declared = Object.values(route.responses).find((r) => r.contentType)?.contentType;
          const ct = String(res.headers["content-type"] ?? "");
          // application/octet-stream is declared for "the stored file, of its own type": a download.
          const ok =
            declared === "application/octet-stream"
              ? String(res.headers["content-disposition"]).startsWith("attachment")
              : declared
                ? ct.startsWith(declared)
                : isJson;
          if (!ok) failures.push(`not the declared content type: ${what}`);
        }
      }
      const after = snapshot();
      expect(failures).toEqual([]);
      expect(after.counts).toEqual(before.counts);
      expect(after.digests).toEqual(before.digests);
      expect(after.files).toEqual(before.files);
      // A parsed "__proto__" key must not have reached Object.prototype.
      expect(({} as Record<string, unknown>).polluted).toBeUndefined();

      const refused = cases.filter((c) => c.expect === "refused").length;
      expect(refused).toBeGreaterThanOrEqual(500);
      // Every served route got at least one case.
      expect(new Set(cases.map((c) => c.route))).toEqual(new Set(routes().map(key)));
    },
  );
});

afterAll(() => {
  const tally = (f: (r: (typeof results)[number]) => string) => {
    const m: Record<string, number> = {};
    for (const r of results) m[f(r)] = (m[f(r)] ?? 0) + 1;
    return Object.fromEntries(Object.entries(m).sort());
  };
  console.log(
    [
      `fuzz: ${results.length} cases over ${new Set(results.map((r) => r.c.route)).size} routes; ` +
        `refused ${results.filter((r) => r.c.expect === "refused").length}, hostile-valid ${results.filter((r) => r.c.expect === "hostile-valid").length}`,
      `by status: ${JSON.stringify(tally((r) => String(r.status)))}`,
      `by kind: ${JSON.stringify(tally((r) => `${r.c.kind}/${r.c.expect}`))}`,
      `refused by status: ${JSON.stringify(tally((r) => (r.c.expect === "refused" ? String(r.status) : "(hostile-valid)")))}`,
      `hostile-valid by status: ${JSON.stringify(tally((r) => (r.c.expect === "hostile-valid" ? String(r.status) : "(refused)")))}`,
      `not sent (${notSent.length}):`,
      ...notSent.map((n) => `  ${n}`),
    ].join("\n"),
  );
});

// ---------------------------------------------------------------------------------------------
// The better-auth endpoints that stay open over HTTP (HTTP_AUTH_ENDPOINTS in server/auth.ts)
// ---------------------------------------------------------------------------------------------

describe("bad-input fuzz: the sign-in endpoints", () => {
  it(
    "when the open sign-in endpoints get hostile bodies, then each answers a 4xx in the error envelope (never a 5xx) and nothing is written",
    { timeout: 60_000 },
    async () => {
      // Anonymous, so no hostile sign-out ends a session; e-mails that exist nowhere, so no mail goes
      // out; at most four wrong passwords per address and e-mail, so no lock (and its audit row) is made.
      const OPEN: { path: string; body: Record<string, unknown> }[] = [
        { path: "/api/auth/sign-in/email", body: { email: "fuzz-nobody@example.test", password: "fuzz-wrong-password" } },
        { path: "/api/auth/sign-out", body: {} },
        { path: "/api/auth/request-password-reset", body: { email: "fuzz-nobody@example.test", redirectTo: "/reset-password" } },
        { path: "/api/auth/reset-password", body: { token: "FuzzNoSuchToken1", newPassword: "fuzz-long-password" } },
      ];
      const nested = (n: number) => "[".repeat(n) + "]".repeat(n);
      const authCases: { what: string; expect: Expect; send: () => request.Test }[] = [];
      const post =
        (path: string, raw: string, type = "application/json") =>
        () =>
          request(server).post(path).set("Origin", origin).set("Content-Type", type).send(raw);
      for (const { path, body } of OPEN) {
        const add = (what: string, raw: string, expect: Expect = "refused", type?: string) =>
          authCases.push({ what: `${path} ${what}`, expect, send: post(path, raw, type) });
        for (const [label, raw] of [
          ["an array", "[1,2]"],
          ["a string", '"text"'],
          ["a number", "42"],
          ["null", "null"],
          ["malformed", '{"email":'],
        ] as const)
          add(`the body is ${label}`, raw);
        add("a 100,000-character body", json({ ...body, pad: HUGE_BODY_STRING }));
        add("5,000 nested arrays", `{"pad":${nested(5_000)}}`);
        add("text/plain", json(body), "refused", "text/plain");
        add(
          "__proto__ and constructor keys",
          '{"__proto__":{"polluted":true},"constructor":{"prototype":{"polluted":true}},' + json(body).slice(1),
          path.endsWith("/sign-in/email") || path.endsWith("/reset-password") ? "refused" : "hostile-valid",
        );
        for (const field of Object.keys(body)) {
          for (const [label, value] of [
            ["an object", { x: 1 }],
            ["an array", ["a"]],
            ["a number", 12345],
            ["null", null],
            ["true", true],
          ] as const) {
            add(`${field} = ${label}`, json({ ...body, [field]: value }));
          }
          add(`${field} = 100,000 characters`, json({ ...body, [field]: HUGE_BODY_STRING }));
          add(
            `${field} = 5,000 nested arrays`,
            `{${Object.entries(body)
              .map(([k, v]) => `${JSON.stringify(k)}:${k === field ? nested(5_000) : JSON.stringify(v)}`)
              .join(",")}}`,
          );
        }
        if (path.endsWith("/sign-out"))
          add(
            "an object with unknown keys (sign-out reads no body: it answers as always)",
            json({ email: SQL[0], everything: [TRAVERSAL, UNICODE] }),
            "hostile-valid",
          );
      }
      // The mailed link.
      for (const [label, p] of [
        ["a 5,000-character token", `/api/auth/reset-password/${"A".repeat(5_000)}?callbackURL=%2Freset-password`],
        ["a traversal token", "/api/auth/reset-password/..%2F..%2Fetc%2Fpasswd?callbackURL=%2Freset-password"],
        ["an SQL token", `/api/auth/reset-password/${encodeURIComponent(SQL[0])}?callbackURL=%2Freset-password`],
        ["a foreign callback", "/api/auth/reset-password/FuzzNoSuchToken1?callbackURL=https%3A%2F%2Fevil.example%2F"],
        ["a javascript: callback", "/api/auth/reset-password/FuzzNoSuchToken1?callbackURL=javascript%3Aalert(1)"],
        ["no callback", "/api/auth/reset-password/FuzzNoSuchToken1"],
        ["the callback twice", "/api/auth/reset-password/FuzzNoSuchToken1?callbackURL=%2Freset-password&callbackURL=%2Fx"],
      ] as const) {
        authCases.push({ what: `GET reset link with ${label}`, expect: "refused", send: () => request(server).get(p).set("Origin", origin) });
      }

      const before = snapshot();
      const failures: string[] = [];
      const statuses: Record<string, number> = {};
      for (const c of authCases) {
        const res = await c.send();
        statuses[res.status] = (statuses[res.status] ?? 0) + 1;
        const what = `${c.what} → ${res.status} ${JSON.stringify(res.body).slice(0, 160)}`;
        const envelope =
          /^application\/json/.test(String(res.headers["content-type"] ?? "")) &&
          typeof res.body?.error?.code === "string" &&
          typeof res.body?.error?.message === "string";
        if (res.status >= 500) failures.push(`5xx: ${what}`);
        else if (c.expect === "refused" && (res.status < 400 || res.status > 499)) failures.push(`not refused: ${what}`);
        else if (res.status >= 400 && !envelope) failures.push(`no error envelope: ${what}`);
      }
      const after = snapshot();
      expect(failures).toEqual([]);
      expect(after.counts).toEqual(before.counts);
      expect(after.digests).toEqual(before.digests);
      expect(({} as Record<string, unknown>).polluted).toBeUndefined();
      expect(authCases.length).toBeGreaterThanOrEqual(80);
      console.log(`fuzz, sign-in endpoints: ${authCases.length} cases; by status ${JSON.stringify(statuses)}`);
    },
  );
});
