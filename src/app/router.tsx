import type { QueryClient } from "@tanstack/react-query";
import { createBrowserRouter, type LoaderFunction, type RouteObject, type ShouldRevalidateFunction } from "react-router";
import type { ReportKind } from "@/features/reports/components/report-params";
import { makeLoader as makeFrameLoader } from "./routes/app-layout.loader";
import { makeLoader as makeHeatsLoader } from "./routes/heats.loader";
import { Spinner } from "@/components/ui/logo";
import { RootError, RouteError } from "./routes/route-error";

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
 * A report screen (its data come through `makeReportLoader(kind)`, held here, not in its module): its data, and the
 * chart code every report draws — the largest file of the screen, which the view would otherwise ask
 * for only once the answer has come and been drawn as a table. The report loader's own code is a
 * small chunk fetched beside the screen's (kept out of the first script every screen loads, the
 * inspector's included); the chart code is asked for only once the role may read reports.
 */
const reportScreen = (qc: QueryClient, kind: ReportKind, load: () => Promise<RouteModule>) =>
  earlyScreen(
    qc,
    (qc) => async (args) => {
      const { makeReportLoader } = await import("./report-frame");
      const result = await makeReportLoader(kind)(qc)(args);
      void import("@/features/reports/components/charts/report-chart").catch(() => undefined);
      return result;
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
      <Spinner label="Loading Strandsight" />
    </div>
  );
}

export function createRouter(qc: QueryClient) {
  return createBrowserRouter([
    { path: "/sign-in", ErrorBoundary: RootError, HydrateFallback: FirstLoad, lazy: lazyRoute(qc, () => import("./routes/sign-in")) },
    // Signed out on purpose: someone who forgot the password has no session.
    { path: "/forgot-password", ErrorBoundary: RootError, HydrateFallback: FirstLoad, lazy: lazyRoute(qc, () => import("./routes/forgot-password")) },
    { path: "/reset-password", ErrorBoundary: RootError, HydrateFallback: FirstLoad, lazy: lazyRoute(qc, () => import("./routes/reset-password")) },
    // Outside the frame: while a first password set by an administrator is to be replaced, nothing else shows.
    { path: "/change-password", ErrorBoundary: RootError, HydrateFallback: FirstLoad, lazy: lazyRoute(qc, () => import("./routes/change-password")) },
    {
      path: "/",
      ErrorBoundary: RootError,
      HydrateFallback: FirstLoad,
      // Who is signed in is asked (index.html, src/main.tsx) while the frame's code loads.
      ...earlyScreen(qc, makeFrameLoader, () => import("./routes/app-layout")),
      children: inFrame([
        { index: true, lazy: lazyRoute(qc, () => import("./routes/home")) },
        { path: "yard", lazy: lazyRoute(qc, () => import("./routes/yard")) },
        { path: "yard/slabs/:slabId", lazy: lazyRoute(qc, () => import("./routes/yard-slab")) },
        { path: "quality", lazy: lazyRoute(qc, () => import("./routes/quality-home")) },
        { path: "quality/review", lazy: lazyRoute(qc, () => import("./routes/quality-review")) },
        { path: "quality/catalogue", lazy: lazyRoute(qc, () => import("./routes/quality-catalogue")) },
        { path: "process", lazy: lazyRoute(qc, () => import("./routes/process-home")) },
        { path: "claims", lazy: lazyRoute(qc, () => import("./routes/claims-home")) },
        { path: "claims/new", lazy: lazyRoute(qc, () => import("./routes/claim-new")) },
        { path: "claims/:id", lazy: lazyRoute(qc, () => import("./routes/claim")) },
        { path: "trace", lazy: lazyRoute(qc, () => import("./routes/trace")) },
        { path: "heats", ...earlyScreen(qc, makeHeatsLoader, () => import("./routes/heats")) },
        { path: "heats/:heatNo", lazy: lazyRoute(qc, () => import("./routes/heat")) },
        { path: "heats/:heatNo/history", lazy: lazyRoute(qc, () => import("./routes/heat-history")) },
        { path: "slabs/:slabId", lazy: lazyRoute(qc, () => import("./routes/slab")) },
        { path: "reports", lazy: lazyRoute(qc, () => import("./routes/reports")) },
        { path: "reports/overview", ...reportScreen(qc, "overview", () => import("./routes/report-overview")) },
        { path: "reports/rate-by-variable", ...reportScreen(qc, "rate-by-variable", () => import("./routes/report-rate-by-variable")) },
        { path: "reports/screening", ...reportScreen(qc, "screening", () => import("./routes/report-screening")) },
        { path: "reports/process-window", lazy: lazyRoute(qc, () => import("./routes/report-process-window")) },
        { path: "reports/control-chart", ...reportScreen(qc, "control-chart", () => import("./routes/report-control-chart")) },
        { path: "reports/before-after", lazy: lazyRoute(qc, () => import("./routes/report-before-after")) },
        { path: "reports/slab-positions", ...reportScreen(qc, "slab-positions", () => import("./routes/report-slab-positions")) },
        { path: "reports/cause-pareto", ...reportScreen(qc, "cause-pareto", () => import("./routes/report-cause-pareto")) },
        { path: "reports/adjusted", ...reportScreen(qc, "adjusted", () => import("./routes/report-adjusted")) },
        { path: "risk-models", lazy: lazyRoute(qc, () => import("./routes/risk-models")) },
        { path: "operating-windows", lazy: lazyRoute(qc, () => import("./routes/operating-windows")) },
        { path: "causes", lazy: lazyRoute(qc, () => import("./routes/causes")) },
        { path: "causes/untagged", lazy: lazyRoute(qc, () => import("./routes/causes-untagged")) },
        { path: "investigations", lazy: lazyRoute(qc, () => import("./routes/investigations")) },
        { path: "investigations/new", lazy: lazyRoute(qc, () => import("./routes/investigation-new")) },
        { path: "investigations/:id", lazy: lazyRoute(qc, () => import("./routes/investigation")) },
        { path: "import", lazy: lazyRoute(qc, () => import("./routes/import")) },
        { path: "setup", lazy: lazyRoute(qc, () => import("./routes/setup")) },
        { path: "admin/users", lazy: lazyRoute(qc, () => import("./routes/admin-users")) },
        { path: "admin/tokens", lazy: lazyRoute(qc, () => import("./routes/admin-tokens")) },
        { path: "admin/outbox", lazy: lazyRoute(qc, () => import("./routes/admin-outbox")) },
        { path: "no-role", lazy: lazyRoute(qc, () => import("./routes/no-role")) },
        { path: "*", lazy: lazyRoute(qc, () => import("./routes/not-found")) },
      ]),
    },
  ]);
}
