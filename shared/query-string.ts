/** A query as the client's API calls send it (src/lib/api-client.ts): empty values left out, lists repeated, in the object's order. */
export type Query = Record<string, string | number | boolean | null | undefined | (string | number)[]>;

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
