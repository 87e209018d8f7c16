/// <reference types="vite-plugin-pwa/client" />
import { StrictMode, Suspense } from "react";
import { createRoot } from "react-dom/client";
import { RouterProvider } from "react-router/dom";
import { registerSW } from "virtual:pwa-register";
import "./index.css";
import "./i18n";
import { AppProvider, type AppUpdate } from "./app/provider";
import { createRouter } from "./app/router";
import { authKeys } from "./features/auth/api/session";
import { forgetUser } from "./features/auth/remembered-user";
import { createQueryClient } from "./lib/query-client";
import { afterFirstView } from "./components/ui/first-view";

const queryClient = createQueryClient({
  // The session ended while the user was working: forget what was cached and ask them to sign in.
  onUnauthenticated: () => {
    if (["/sign-in", "/forgot-password", "/reset-password"].includes(window.location.pathname)) return;
    queryClient.clear();
    forgetUser();
    const next = window.location.pathname + window.location.search;
    void router.navigate(`/sign-in?next=${encodeURIComponent(next)}&expired=1`, { replace: true });
  },
});
// The session, asked first: this fetch takes the answer index.html's preload has been fetching
// since the page began, and the screens' loaders find it in the cache. Taken here, at once: a
// preload left unused could otherwise answer a later ask (after signing in) with what was true before.
void queryClient.prefetchQuery(authKeys.me());
const router = createRouter(queryClient);

/**
 * The service worker (vite.config.ts) keeps the app on the device. A new version installs in the
 * background and waits: the page offers "Reload" and changes only when the person taps it, never
 * under a half-filled form.
 */
function watchForUpdates(): AppUpdate {
  let ready = false;
  let asked = false;
  const listeners = new Set<() => void>();
  const set = () => {
    ready = true;
    listeners.forEach((l) => l());
  };
  // Only the built app has a worker (`npm run dev` serves none). Registered once the first screen
  // has been drawn: on a device that has never stored the app, the worker then fetches and stores
  // every file of it, which on a small machine held the first screen back by a few tenths of a second.
  let takeOver: (reload?: boolean) => Promise<void> = async () => undefined;
  // Its turn may come while the tablet is out of the Wi-Fi (the inspector walks into the yard a few
  // seconds after signing in): the worker's code could not be fetched and the app would not be
  // stored for the rest of the visit. Asked for once there is a network, and again a minute after a
  // failed try (the network went while it was being fetched).
  const whenOnline = (fn: () => void) => (navigator.onLine ? fn() : window.addEventListener("online", fn, { once: true }));
  const register = () => {
    takeOver = registerSW({
      // After the page has loaded (the first view can be drawn before the page's last file is in).
      immediate: false,
      onNeedRefresh: set,
      // The new version took over (this tab's Reload, or another tab's): reload only if asked here.
      onNeedReload: () => (asked ? window.location.reload() : set()),
      onRegisteredSW(_url, registration) {
        // A tablet stays open all shift: look for a new version every hour while the network is there.
        if (registration) setInterval(() => void registration.update().catch(() => undefined), 60 * 60 * 1000);
      },
      onRegisterError: () => setTimeout(() => whenOnline(register), 60_000),
    });
  };
  if (import.meta.env.PROD) void afterFirstView().then(() => whenOnline(register));
  return {
    subscribe(l) {
      listeners.add(l);
      return () => listeners.delete(l);
    },
    ready: () => ready,
    apply() {
      asked = true;
      void takeOver(true);
    },
  };
}

createRoot(document.getElementById("root")!).render(
  <StrictMode>
    <AppProvider queryClient={queryClient} update={watchForUpdates()}>
      {/* Outside the frame, a screen whose texts' catalogue is on its way waits here (src/i18n). */}
      <Suspense fallback={null}>
        <RouterProvider router={router} />
      </Suspense>
    </AppProvider>
  </StrictMode>,
);
