import { MutationCache, QueryCache, QueryClient } from "@tanstack/react-query";
import { ApiError } from "./api-client";

export interface QueryClientHooks {
  /** A request came back 401: the session ended (expired, signed out elsewhere, deactivated). */
  onUnauthenticated?: () => void;
}

export function createQueryClient(hooks: QueryClientHooks = {}) {
  const onError = (err: unknown, isMeQuery: boolean) => {
    if (err instanceof ApiError && err.status === 401 && !isMeQuery) hooks.onUnauthenticated?.();
  };
  const qc: QueryClient = new QueryClient({
    queryCache: new QueryCache({
      onError: (err, query) => {
        onError(err, query.queryKey[0] === "auth");
        // A 403 may mean the roles changed since the menu was drawn: ask for them again.
        if (err instanceof ApiError && err.status === 403) void qc.invalidateQueries({ queryKey: ["auth"] });
      },
    }),
    mutationCache: new MutationCache({ onError: (err) => onError(err, false) }),
    defaultOptions: {
      queries: {
        staleTime: 30_000,
        // Retry network trouble, never a 4xx: a refused request will not change its mind. With the
        // device surely offline, fail at once: the screen says so rather than waiting.
        retry: (count, err) =>
          !(err instanceof ApiError && err.status >= 400 && err.status < 500) && count < 2 && (typeof navigator === "undefined" || navigator.onLine !== false),
        // Ask even when the browser says offline (the default would wait, and a screen's loader
        // with it, until the network returns): the answer comes at once, from the network or not.
        networkMode: "offlineFirst",
        refetchOnWindowFocus: false,
      },
      mutations: { networkMode: "offlineFirst" },
    },
  });
  return qc;
}
