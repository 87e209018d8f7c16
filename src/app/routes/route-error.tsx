import { useState } from "react";
import { isRouteErrorResponse, Link, useLocation, useNavigate, useRouteError } from "react-router";
import { Button } from "@/components/ui/button";
import { PageHeader } from "@/components/ui/card";
import { Logo } from "@/components/ui/logo";
import { ApiError } from "@/lib/api-client";
import { useOnline } from "../provider";

/** A screen's code could not be fetched (no network before it was stored here, or an old version's file is gone). */
export function isChunkLoadError(err: unknown): boolean {
  const message = err instanceof Error ? err.message : typeof err === "string" ? err : "";
  return /dynamically imported module|Importing a module script failed|Unable to preload CSS|error loading dynamically imported module/i.test(message);
}

function describe(err: unknown, online: boolean): { title: string; text: string; chunk: boolean } {
  const chunk = isChunkLoadError(err);
  if (chunk && !online) {
    return { title: "This screen is not on this tablet yet", text: "You are offline. It opens once the network is back: tap Try again then.", chunk };
  }
  if (chunk) return { title: "This screen could not be loaded", text: "The app may have been updated meanwhile. Try again reloads it.", chunk };
  if (err instanceof ApiError && err.status === 0) {
    return {
      title: online ? "The server cannot be reached" : "You are offline",
      text: "This screen needs the server. Entries saved in the slab yard wait on this tablet and are sent when the network is back; " + "try again then.",
      chunk,
    };
  }
  if (isRouteErrorResponse(err)) {
    const message = (err.data as { message?: string } | undefined)?.message;
    if (err.status === 403) return { title: "Not open to your role", text: message ?? "Your role does not open this screen.", chunk };
    if (err.status === 404) return { title: "Not found", text: message ?? "There is nothing at this address.", chunk };
  }
  if (err instanceof ApiError) return { title: err.status === 404 ? "Not found" : "Something went wrong", text: err.message, chunk };
  return { title: "Something went wrong", text: "The screen could not be shown. Try again, or go to your home screen.", chunk };
}

const linkButton =
  "inline-flex min-h-14 items-center justify-center rounded-md border border-ink-300 bg-white px-6 text-base font-semibold text-ink-900 hover:bg-ink-50";

/**
 * Shown in place of a screen whose loader, code or drawing failed — inside the app's frame, so the
 * menu and the offline band stay, and the outbox (src/app/provider.tsx) goes on sending.
 */
export function RouteError() {
  const err = useRouteError();
  const online = useOnline();
  const navigate = useNavigate();
  const location = useLocation();
  const [note, setNote] = useState<string | null>(null);
  const { title, text, chunk } = describe(err, online);

  const tryAgain = () => {
    setNote(null);
    if (chunk && navigator.onLine !== false) {
      // A module that failed to load stays failed in this page: only a fresh load fetches it again.
      window.location.reload();
      return;
    }
    if (navigator.onLine === false) setNote("Still offline. Try again when the network is back.");
    // The same address again: its code, loader and drawing run anew.
    void navigate(location.pathname + location.search + location.hash, { replace: true });
  };

  return (
    <div data-testid="route-error" data-offline={online ? undefined : "true"}>
      <PageHeader title={title} subtitle={text} />
      <div className="flex flex-wrap gap-3">
        <Button size="lg" onClick={tryAgain}>
          Try again
        </Button>
        <Link to="/" className={linkButton}>
          Go to your home screen
        </Link>
      </div>
      {note ? (
        <p role="status" className="mt-3 text-sm font-semibold text-ink-800">
          {note}
        </p>
      ) : null}
    </div>
  );
}

/** The same, for a failure outside the app's frame (the frame itself, or the sign-in pages). */
export function RootError() {
  return (
    <div className="flex min-h-dvh flex-col">
      <header className="bg-ink-900 text-white">
        <div className="mx-auto flex max-w-7xl items-center gap-2 px-4 py-3">
          <Logo />
          <span className="text-lg font-bold tracking-tight">Strandsight</span>
        </div>
      </header>
      <main className="mx-auto w-full max-w-7xl flex-1 px-4 py-6">
        <RouteError />
      </main>
    </div>
  );
}
