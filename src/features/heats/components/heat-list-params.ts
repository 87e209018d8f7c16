import { HEAT_SORT_KEYS, type HeatListQuery } from "@shared/api/heats";
import type { HeatListParams } from "../api/heats.queries";

export const PAGE_SIZES = [25, 50, 100] as const;
const DEFAULT_PAGE_SIZE = 25;

/** The heats list keeps its filters, sort and page in the address, so a view can be bookmarked and shared. */
export function readHeatListParams(sp: URLSearchParams): HeatListParams {
  const p: HeatListParams = {};
  const text = (k: "q" | "grade" | "family" | "from" | "to") => {
    const v = sp.get(k)?.trim();
    if (v) p[k] = v.slice(0, 40);
  };
  text("q");
  text("grade");
  text("family");
  text("from");
  text("to");
  const sort = sp.get("sort");
  if (sort && (HEAT_SORT_KEYS as readonly string[]).includes(sort)) p.sort = sort as HeatListQuery["sort"];
  const dir = sp.get("dir");
  if (dir === "asc" || dir === "desc") p.dir = dir;
  const page = Number(sp.get("page"));
  if (Number.isInteger(page) && page > 1) p.page = page;
  const size = Number(sp.get("pageSize"));
  if ((PAGE_SIZES as readonly number[]).includes(size) && size !== DEFAULT_PAGE_SIZE) p.pageSize = size;
  return p;
}

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
