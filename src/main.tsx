import { StrictMode } from "react";
import { createRoot } from "react-dom/client";
import { RouterProvider } from "react-router/dom";
import "./index.css";
import { AppProvider } from "./app/provider";
import { createRouter } from "./app/router";
import { createQueryClient } from "./lib/query-client";

const queryClient = createQueryClient({
  // The session ended while the user was working: forget what was cached and ask them to sign in.
  onUnauthenticated: () => {
    if (["/sign-in", "/forgot-password", "/reset-password"].includes(window.location.pathname)) return;
    queryClient.clear();
    const next = window.location.pathname + window.location.search;
    void router.navigate(`/sign-in?next=${encodeURIComponent(next)}&expired=1`, { replace: true });
  },
});
const router = createRouter(queryClient);

createRoot(document.getElementById("root")!).render(
  <StrictMode>
    <AppProvider queryClient={queryClient}>
      <RouterProvider router={router} />
    </AppProvider>
  </StrictMode>,
);
