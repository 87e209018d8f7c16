import { HEAT_SORT_KEYS, type HeatListQuery } from "./api/heats";

/**
 * The heats list keeps its filters, sort and page in the address, so a view can be bookmarked and
 * shared. Here, not in the client, so that the server can name the list's first request in the page
 * it answers (server/lib/screen-data.ts) with exactly the address the screen will ask.
 */
export type HeatListParams = Partial<HeatListQuery>;

export const PAGE_SIZES = [25, 50, 100] as const;
export const DEFAULT_PAGE_SIZE = 25;

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
