import type { z } from "zod";
import { toQueryString, type Query } from "@shared/query-string";

/** An error answer of the API: `{ error: { code, message, details } }` with its HTTP status. */
export class ApiError extends Error {
  constructor(
    public readonly status: number,
    public readonly code: string,
    message: string,
    public readonly details?: unknown,
  ) {
    super(message);
    this.name = "ApiError";
  }
}

// Shared with the server, which names a screen's first request in its page (server/lib/screen-data.ts).
export { toQueryString };

/**
 * A shared schema, or how to load it. Building the shared modules' schemas is a good part of the
 * time the app's first script takes to run, and a screen's first view needs few of them: a query
 * whose answer can wait gives a function that loads its schema (./record-schemas.ts), called beside
 * the request.
 */
export type SchemaSource<T> = z.ZodType<T> | (() => Promise<z.ZodType<T>>);

interface RequestOptions<T> {
  method?: "GET" | "POST" | "PATCH" | "PUT" | "DELETE";
  query?: Query;
  body?: unknown;
  /** Parse the answer with the shared schema, so a contract drift fails loudly here. */
  schema?: SchemaSource<T>;
  signal?: AbortSignal;
}

/** fetch with the session cookie, JSON in and out, and errors as ApiError. */
export async function api<T = unknown>(path: string, opts: RequestOptions<T> = {}): Promise<T> {
  // A schema that is loaded comes in beside the answer; a request that fails first leaves it unread.
  const schema = typeof opts.schema === "function" ? opts.schema() : opts.schema;
  if (schema instanceof Promise) schema.catch(() => undefined);
  let response: Response;
  try {
    response = await fetch(`/api${path}${toQueryString(opts.query)}`, {
      method: opts.method ?? "GET",
      credentials: "same-origin",
      headers: opts.body !== undefined ? { "content-type": "application/json" } : undefined,
      body: opts.body !== undefined ? JSON.stringify(opts.body) : undefined,
      signal: opts.signal,
    });
  } catch (err) {
    if ((err as Error).name === "AbortError") throw err;
    throw new ApiError(0, "network", "No connection to the server. Check the network and try again.");
  }
  if (response.status === 204) return undefined as T;
  const text = await response.text();
  let data: unknown = undefined;
  try {
    data = text ? JSON.parse(text) : undefined;
  } catch {
    // not JSON
  }
  if (!response.ok) {
    const e = (data as { error?: { code?: string; message?: string; details?: unknown } } | undefined)?.error;
    throw new ApiError(response.status, e?.code ?? "http_error", e?.message ?? `The server answered ${response.status}.`, e?.details);
  }
  return schema ? (await schema).parse(data) : (data as T);
}

export interface UploadProgress {
  loaded: number;
  total: number;
  /** 0…1 while the file goes up; null when the browser cannot tell the size. */
  fraction: number | null;
  /** The file is up; the server is working on it. */
  sent: boolean;
}

interface UploadOptions<T> {
  query?: Query;
  field?: string;
  /** Text fields sent beside the file (e.g. the photos' client keys). */
  fields?: Record<string, string>;
  schema?: z.ZodType<T>;
  onProgress?: (p: UploadProgress) => void;
  signal?: AbortSignal;
}

/**
 * A multipart upload with the session cookie. It goes through XMLHttpRequest because fetch reports
 * no upload progress; answers and errors are the same as api()'s.
 */
export function apiUpload<T = unknown>(path: string, file: File, opts: UploadOptions<T> = {}): Promise<T> {
  return new Promise<T>((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open("POST", `/api${path}${toQueryString(opts.query)}`);
    xhr.withCredentials = true;
    xhr.responseType = "text";
    xhr.upload.onprogress = (e) =>
      opts.onProgress?.({ loaded: e.loaded, total: e.total, fraction: e.lengthComputable && e.total > 0 ? e.loaded / e.total : null, sent: false });
    xhr.upload.onload = () => opts.onProgress?.({ loaded: file.size, total: file.size, fraction: 1, sent: true });
    xhr.onerror = () => reject(new ApiError(0, "network", "No connection to the server. Check the network and try again."));
    xhr.onabort = () => reject(new DOMException("The upload was cancelled.", "AbortError"));
    xhr.onload = () => {
      let data: unknown = undefined;
      try {
        data = xhr.responseText ? JSON.parse(xhr.responseText) : undefined;
      } catch {
        // not JSON
      }
      if (xhr.status < 200 || xhr.status >= 300) {
        const e = (data as { error?: { code?: string; message?: string; details?: unknown } } | undefined)?.error;
        const fallback = xhr.status === 413 ? "The file is too large for the server." : `The server answered ${xhr.status}.`;
        reject(new ApiError(xhr.status, e?.code ?? "http_error", e?.message ?? fallback, e?.details));
        return;
      }
      try {
        resolve(opts.schema ? opts.schema.parse(data) : (data as T));
      } catch (err) {
        reject(err);
      }
    };
    opts.signal?.addEventListener("abort", () => xhr.abort(), { once: true });
    const body = new FormData();
    for (const [k, v] of Object.entries(opts.fields ?? {})) body.append(k, v);
    body.append(opts.field ?? "file", file, file.name);
    xhr.send(body);
  });
}
