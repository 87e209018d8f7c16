import type { QueryClient } from "@tanstack/react-query";
import type { LoaderFunctionArgs } from "react-router";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { requireCapability } from "../guard";

/**
 * The heats list's loader, apart from the screen's module (whose table code is large) so that the
 * router can hold it from the start and ask for the list while that code is still being fetched.
 */
export function makeLoader(qc: QueryClient) {
  return async ({ request }: LoaderFunctionArgs) => {
    await requireCapability(qc, "heats.browse");
    // The list's query and how it reads the address (and their schemas) come in small chunks of
    // their own, fetched beside the screen's code: kept out of the app's first script, which every
    // role — the inspector's tablet first — loads.
    const url = new URL(request.url);
    void import("@/features/heats/api/heats.queries").then(({ heatListOf }) => qc.prefetchQuery(heatListOf(url.searchParams)));
    void qc.prefetchQuery(plantKeys.setup());
    return null;
  };
}
