import { useEffect, useState, useSyncExternalStore, type ReactNode } from "react";

/*
 * The first view of a page load: what a screen opened cold shows first (a report's figures, its first
 * table and its first chart) is drawn before the parts that can wait (what lies below it, the filter
 * bar's date fields), which would otherwise hold the first paint back and then the first chart. The
 * first view is drawn once the screen has been painted and the chart it holds for (useHoldForChart),
 * if any, has been drawn. Only a page's first seconds wait: a screen opened later draws at once.
 */

/** Nothing waits once the page is this old (ms since it began): a chart that could not load, a slow device, a later screen. */
const PAGE_AGE_LIMIT_MS = 2500;

let drawn = false;
let painted = false;
let holdingForChart = false;
let started = false;
const listeners = new Set<() => void>();

function open() {
  if (drawn) return;
  drawn = true;
  for (const listener of [...listeners]) listener();
}

/**
 * Starts watching for the first paint (once): the frame after the commit that first asked, then the
 * task after that frame (a page in the background draws no frames: a timer lets it go on).
 */
function start() {
  if (started) return;
  started = true;
  const onPainted = () => {
    if (painted) return;
    painted = true;
    if (!holdingForChart) open();
  };
  requestAnimationFrame(() => setTimeout(onPainted));
  setTimeout(onPainted, 250);
  setTimeout(open, Math.max(0, PAGE_AGE_LIMIT_MS - performance.now()));
}

/** A chart has been drawn (after the first paint, so): the parts that wait are drawn now. */
export function chartDrawn() {
  open();
}

function subscribe(listener: () => void) {
  listeners.add(listener);
  return () => void listeners.delete(listener);
}

/** Once true, true for good: a snapshot that never flips back. */
function isDrawn() {
  if (!drawn && performance.now() > PAGE_AGE_LIMIT_MS) drawn = true;
  return drawn;
}

/** The first view of the page is on screen (for a loader: it was, when the loader ran). */
export const firstViewDrawn = isDrawn;

/** Whether the first view of the page is on screen; the part asking is drawn again when it is. */
export function useFirstViewDrawn(): boolean {
  const ready = useSyncExternalStore(subscribe, isDrawn, isDrawn);
  useEffect(() => {
    if (!ready) start();
  }, [ready]);
  return ready;
}

/** Draws its children once the first view of the page is on screen; until then `placeholder` (nothing by default). */
export function AfterFirstView({ children, placeholder = null }: { children: ReactNode; placeholder?: ReactNode }) {
  return useFirstViewDrawn() ? children : placeholder;
}

/** For the chart a screen shows first: the first view is drawn only once a chart has been (see chartDrawn). */
export function useHoldForChart() {
  useEffect(() => {
    if (isDrawn()) return;
    holdingForChart = true;
    start();
  }, []);
}

/** How long work waiting for the first view then waits for the browser to be idle, at most. */
const IDLE_LIMIT_MS = 3000;

/**
 * Resolves once the first view of the page is on screen and what waited for it has been drawn too:
 * the browser's next idle moment after that (requestIdleCallback, IDLE_LIMIT_MS at most; a timer
 * where a browser has none). For work that must not compete with the first screen (storing the app
 * on the device, an office role's outbox). On a page no part of which waits for its first view, the
 * first view counts as drawn once the page is PAGE_AGE_LIMIT_MS old, as everywhere else here.
 */
export function afterFirstView(): Promise<void> {
  return new Promise<void>((resolve) => {
    if (isDrawn()) return resolve();
    const off = subscribe(() => {
      off();
      resolve();
    });
    setTimeout(open, Math.max(0, PAGE_AGE_LIMIT_MS - performance.now()));
  }).then(
    () =>
      new Promise<void>((resolve) => {
        if (typeof requestIdleCallback === "function") requestIdleCallback(() => resolve(), { timeout: IDLE_LIMIT_MS });
        else setTimeout(resolve, 200);
      }),
  );
}

const loaded = new WeakMap<() => Promise<unknown>, unknown>();

/**
 * A module a part of the screen needs only after its first paint (a chart's code): asked for once the
 * part has been committed, handed back once it has arrived, null until then (and at once when it has
 * been loaded before). Unlike React's lazy() nothing suspends: React holds back a Suspense boundary's
 * content until 0.3 s after the last fallback was shown, and a report's first chart waited for that
 * after every first table. A module that cannot be loaded is thrown when the part is drawn, to the
 * route's error view, as lazy() does. `load` must be the same function on every call (a module-level one).
 */
export function useModuleAfterCommit<T>(load: () => Promise<T>): T | null {
  const [state, setState] = useState<{ module: T } | { error: unknown } | null>(() => (loaded.has(load) ? { module: loaded.get(load) as T } : null));
  useEffect(() => {
    if (loaded.has(load)) return;
    let live = true;
    load().then(
      (module) => {
        loaded.set(load, module);
        if (live) setState({ module });
      },
      (error: unknown) => live && setState({ error }),
    );
    return () => {
      live = false;
    };
  }, [load]);
  if (state && "error" in state) throw state.error;
  return state ? state.module : null;
}
