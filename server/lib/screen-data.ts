/**
 * The first data request of a screen, named in the page's answer (`Link: <…>; rel=preload; as=fetch`)
 * so the browser asks for it with the page, while the app's code is still on its way — the way
 * index.html asks for /api/session. Named only where the screen will ask for exactly that address
 * (the same reading of the query string and the same canonical query: shared/report-query.ts,
 * shared/heat-list-query.ts, shared/query-string.ts) and only for someone whose role may read it,
 * so a preload never answers 401/403 and is never left unused.
 */
import { readHeatListParams } from "@shared/heat-list-query";
import { toQueryString } from "@shared/query-string";
import { isReportKind, readReportParams, reportQueryString } from "@shared/report-query";
import { can, type Role } from "@shared/roles";
import { reportKindOf, type Screen } from "@shared/screens";

export function firstDataRequest(screen: Screen, search: URLSearchParams, roles: readonly Role[] | undefined): string | null {
  const kind = reportKindOf(screen);
  if (kind !== null) {
    if (!isReportKind(kind) || !can(roles, "reports.read")) return null;
    return `/api/reports/${kind}?${reportQueryString(kind, readReportParams(kind, search))}`;
  }
  if (screen.module === "heats") return can(roles, "heats.browse") ? `/api/heats${toQueryString(readHeatListParams(search))}` : null;
  return null;
}

/** The Link header value for a preloaded fetch (same-origin credentials, as the app's own fetch). */
export const preloadLink = (url: string) => `<${url.replace(/[<>\s]/g, encodeURIComponent)}>; rel=preload; as=fetch; crossorigin`;
