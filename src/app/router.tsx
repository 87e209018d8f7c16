import type { QueryClient } from "@tanstack/react-query";
import { createBrowserRouter, type LoaderFunction, type RouteObject, type ShouldRevalidateFunction } from "react-router";
import type { ReportKind } from "@/features/reports/components/report-params";
import { makeLoader as makeFrameLoader } from "./routes/app-layout.loader";
import { makeLoader as makeHeatsLoader } from "./routes/heats.loader";
import { Spinner } from "@/components/ui/logo";
import { RootError, RouteError } from "./routes/route-error";
import { i18n, textsFor } from "@/i18n";
import { FRAME, IN_FRAME, OUTSIDE_FRAME, reportKindOf, type Screen } from "@shared/screens";

/** A lazily loaded screen: its component, an optional loader built with the QueryClient, and its error view. */
interface RouteModule {
  Component: React.ComponentType;
  makeLoader?: (qc: QueryClient) => LoaderFunction;
  ErrorBoundary?: React.ComponentType;
  /** A screen whose query string only changes what it asks (not whether it may) keeps its loader's answer. */
  shouldRevalidate?: ShouldRevalidateFunction;
}

function lazyRoute(qc: QueryClient, load: () => Promise<RouteModule>, early = false) {
  return async () => {
    let m: RouteModule;
    try {
      m = await load();
    } catch (err) {
      // The screen's code could not be fetched (offline before it was stored on this device). React
      // Router draws nothing at all for a route whose lazy() failed, so fail its loader instead: the
      // route's error view (set on the route below, not taken from the module) then says so. (A
      // route with an early loader fails through that loader: see earlyLoader.)
      if (early) return {};
      return {
        loader: () => {
          throw err;
        },
      };
    }
    // A route with an early loader has its loader already; the module's is the same and left aside.
    return { Component: m.Component, loader: early ? undefined : m.makeLoader?.(qc), ...(m.shouldRevalidate ? { shouldRevalidate: m.shouldRevalidate } : {}) };
  };
}

/**
 * A loader the router holds from the start (it is in the app's first script), so React Router runs it
 * at once, while the route's code is still being fetched, instead of after it. It also waits for that
 * code: if the code cannot be fetched, the loader fails and the route's error view says so (see above).
 */
function earlyLoader(run: LoaderFunction, load: () => Promise<unknown>): LoaderFunction {
  return async (args, handlerCtx) => {
    const [result] = await Promise.all([run(args, handlerCtx), load()]);
    return result;
  };
}

/** A screen whose data are asked for while its code loads: its early loader and its lazy code. */
function earlyScreen(qc: QueryClient, makeLoader: (qc: QueryClient) => LoaderFunction, load: () => Promise<RouteModule>) {
  return { loader: earlyLoader(makeLoader(qc), load), lazy: lazyRoute(qc, load, true) };
}

/**
 * A report screen (its data come through `makeReportLoader(kind)`, held here, not in its module): its
 * data, and the chart code every report draws (asked for by that loader, see there). The report
 * loader's own code is a small chunk fetched beside the screen's (kept out of the first script every
 * screen loads, the inspector's included).
 */
const reportScreen = (qc: QueryClient, kind: ReportKind, load: () => Promise<RouteModule>) =>
  earlyScreen(
    qc,
    (qc) => async (args) => {
      const { makeReportLoader } = await import("./report-frame");
      return makeReportLoader(kind)(qc)(args);
    },
    load,
  );

/**
 * Every screen inside the app's frame shows its failures in the frame's place for it (the menu, the
 * offline band and the outbox go on); the frame's own failure, and the sign-in pages', in RootError.
 */
const inFrame = (routes: RouteObject[]): RouteObject[] => routes.map((r) => ({ ...r, ErrorBoundary: RouteError }));

/**
 * What the router draws while the first screen's code and data load (instead of nothing, with a
 * console warning on every page load): the same quiet spinner the screens use.
 */
function FirstLoad() {
  return (
    <div className="flex min-h-dvh items-center justify-center">
      <Spinner label={i18n.t("loadingApp")} />
    </div>
  );
}

/** Every route module, each its own chunk (Vite splits a glob's imports as it does single dynamic imports). */
const ROUTE_MODULES = import.meta.glob<RouteModule>(["./routes/*.tsx", "!./routes/route-error.tsx"]);

/** A screen's code and its texts' catalogues (src/i18n), fetched side by side. */
function moduleOf(name: string): () => Promise<RouteModule> {
  const load = ROUTE_MODULES[`./routes/${name}.tsx`];
  if (!load) throw new Error(`No route module src/app/routes/${name}.tsx (shared/screens.ts names it)`);
  return async () => (await Promise.all([load(), textsFor(name)]))[0];
}

/** The screens whose loaders the first script holds, so they run while the code loads (see earlyLoader). */
const EARLY_LOADERS: Record<string, (qc: QueryClient) => LoaderFunction> = { "app-layout": makeFrameLoader, heats: makeHeatsLoader };

function screenRoute(qc: QueryClient, s: Screen) {
  const load = moduleOf(s.module);
  const kind = reportKindOf(s);
  if (kind) return reportScreen(qc, kind as ReportKind, load);
  const early = EARLY_LOADERS[s.module];
  return early ? earlyScreen(qc, early, load) : { lazy: lazyRoute(qc, load) };
}

/**
 * The routes, from the list of screens in shared/screens.ts (the server reads the same list to name
 * a screen's code in the page it answers with).
 */
export function createRouter(qc: QueryClient) {
  return createBrowserRouter([
    ...OUTSIDE_FRAME.map((s): RouteObject => ({ path: s.path, ErrorBoundary: RootError, HydrateFallback: FirstLoad, ...screenRoute(qc, s) })),
    {
      path: FRAME.path,
      ErrorBoundary: RootError,
      HydrateFallback: FirstLoad,
      // Who is signed in is asked (index.html, src/main.tsx) while the frame's code loads.
      ...screenRoute(qc, FRAME),
      children: inFrame(IN_FRAME.map((s): RouteObject => (s.path === "" ? { index: true, ...screenRoute(qc, s) } : { path: s.path, ...screenRoute(qc, s) }))),
    },
  ]);
}
