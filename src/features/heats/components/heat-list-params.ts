import { DEFAULT_PAGE_SIZE, type HeatListParams } from "@shared/heat-list-query";

// Reading the list's address lives in shared/heat-list-query.ts (the server names the list's first request with it).
export { PAGE_SIZES, readHeatListParams } from "@shared/heat-list-query";

export function writeHeatListParams(p: HeatListParams): URLSearchParams {
  const sp = new URLSearchParams();
  for (const [k, v] of Object.entries(p)) {
    if (v === undefined || v === null || v === "") continue;
    if (k === "page" && v === 1) continue;
    if (k === "pageSize" && v === DEFAULT_PAGE_SIZE) continue;
    sp.set(k, String(v));
  }
  return sp;
}

export const effectiveSort = (p: HeatListParams) => ({ sort: p.sort ?? "castStart", dir: p.dir ?? "desc" });
export const effectivePage = (p: HeatListParams) => ({ page: p.page ?? 1, pageSize: p.pageSize ?? DEFAULT_PAGE_SIZE });
