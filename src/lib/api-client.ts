import type { z } from "zod";

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

type Query = Record<string, string | number | boolean | null | undefined | (string | number)[]>;

export function toQueryString(query?: Query): string {
  if (!query) return "";
  const params = new URLSearchParams();
  for (const [k, v] of Object.entries(query)) {
    if (v === undefined || v === null || v === "") continue;
    if (Array.isArray(v)) v.forEach((x) => params.append(k, String(x)));
    else params.set(k, String(v));
  }
  const s = params.toString();
  return s ? `?${s}` : "";
}

interface RequestOptions<T> {
  method?: "GET" | "POST" | "PATCH" | "PUT" | "DELETE";
  query?: Query;
  body?: unknown;
  /** Parse the answer with the shared schema, so a contract drift fails loudly here. */
  schema?: z.ZodType<T>;
  signal?: AbortSignal;
}

/** fetch with the session cookie, JSON in and out, and errors as ApiError. */
export async function api<T = unknown>(path: string, opts: RequestOptions<T> = {}): Promise<T> {
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
  return opts.schema ? opts.schema.parse(data) : (data as T);
}
