import type { QueryClient } from "@tanstack/react-query";
import { createBrowserRouter, type LoaderFunction, type RouteObject } from "react-router";
import { RootError, RouteError } from "./routes/route-error";

/** A lazily loaded screen: its component, an optional loader built with the QueryClient, and its error view. */
interface RouteModule {
  Component: React.ComponentType;
  makeLoader?: (qc: QueryClient) => LoaderFunction;
  ErrorBoundary?: React.ComponentType;
}

function lazyRoute(qc: QueryClient, load: () => Promise<RouteModule>) {
  return async () => {
    let m: RouteModule;
    try {
      m = await load();
    } catch (err) {
      // The screen's code could not be fetched (offline before it was stored on this device). React
      // Router draws nothing at all for a route whose lazy() failed, so fail its loader instead: the
      // route's error view (set on the route below, not taken from the module) then says so.
      return {
        loader: () => {
          throw err;
        },
      };
    }
    return { Component: m.Component, loader: m.makeLoader?.(qc) };
  };
}

/**
 * Every screen inside the app's frame shows its failures in the frame's place for it (the menu, the
 * offline band and the outbox go on); the frame's own failure, and the sign-in pages', in RootError.
 */
const inFrame = (routes: RouteObject[]): RouteObject[] => routes.map((r) => ({ ...r, ErrorBoundary: RouteError }));

export function createRouter(qc: QueryClient) {
  return createBrowserRouter([
    { path: "/sign-in", ErrorBoundary: RootError, lazy: lazyRoute(qc, () => import("./routes/sign-in")) },
    // Signed out on purpose: someone who forgot the password has no session.
    { path: "/forgot-password", ErrorBoundary: RootError, lazy: lazyRoute(qc, () => import("./routes/forgot-password")) },
    { path: "/reset-password", ErrorBoundary: RootError, lazy: lazyRoute(qc, () => import("./routes/reset-password")) },
    {
      path: "/",
      ErrorBoundary: RootError,
      lazy: lazyRoute(qc, () => import("./routes/app-layout")),
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
        { path: "heats", lazy: lazyRoute(qc, () => import("./routes/heats")) },
        { path: "heats/:heatNo", lazy: lazyRoute(qc, () => import("./routes/heat")) },
        { path: "heats/:heatNo/history", lazy: lazyRoute(qc, () => import("./routes/heat-history")) },
        { path: "slabs/:slabId", lazy: lazyRoute(qc, () => import("./routes/slab")) },
        { path: "reports", lazy: lazyRoute(qc, () => import("./routes/reports")) },
        { path: "reports/overview", lazy: lazyRoute(qc, () => import("./routes/report-overview")) },
        { path: "reports/rate-by-variable", lazy: lazyRoute(qc, () => import("./routes/report-rate-by-variable")) },
        { path: "reports/screening", lazy: lazyRoute(qc, () => import("./routes/report-screening")) },
        { path: "reports/process-window", lazy: lazyRoute(qc, () => import("./routes/report-process-window")) },
        { path: "reports/control-chart", lazy: lazyRoute(qc, () => import("./routes/report-control-chart")) },
        { path: "reports/before-after", lazy: lazyRoute(qc, () => import("./routes/report-before-after")) },
        { path: "reports/slab-positions", lazy: lazyRoute(qc, () => import("./routes/report-slab-positions")) },
        { path: "reports/cause-pareto", lazy: lazyRoute(qc, () => import("./routes/report-cause-pareto")) },
        { path: "reports/adjusted", lazy: lazyRoute(qc, () => import("./routes/report-adjusted")) },
        { path: "causes", lazy: lazyRoute(qc, () => import("./routes/causes")) },
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
