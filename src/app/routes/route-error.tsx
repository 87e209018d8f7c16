import { useState } from "react";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
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

/** What failed, in words; `retry` false where trying again cannot help (a screen the role may not open, an address with nothing at it). */
function describe(err: unknown, online: boolean, t: TFunction): { title: string; text: string; chunk: boolean; retry?: false } {
  const chunk = isChunkLoadError(err);
  if (chunk && !online) {
    return { title: t("error.notOnTabletTitle"), text: t("error.notOnTablet"), chunk };
  }
  if (chunk) return { title: t("error.notLoadedTitle"), text: t("error.notLoaded"), chunk };
  if (err instanceof ApiError && err.status === 0) {
    return {
      title: online ? t("error.serverUnreachable") : t("error.offline"),
      text: t("error.needsServer"),
      chunk,
    };
  }
  if (isRouteErrorResponse(err)) {
    const said = err.data as { message?: string; reason?: string } | undefined;
    if (err.status === 403)
      return {
        title: t("error.forbiddenTitle"),
        text: said?.reason === "passwordFirst" ? t("error.passwordFirst") : t("error.forbidden"),
        chunk,
        retry: false,
      };
    if (err.status === 404) return { title: t("error.notFoundTitle"), text: said?.message ?? t("error.notFound"), chunk, retry: false };
  }
  if (err instanceof ApiError) return { title: err.status === 404 ? t("error.notFoundTitle") : t("error.wrongTitle"), text: err.message, chunk };
  return { title: t("error.wrongTitle"), text: t("error.wrong"), chunk };
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
  const { t } = useTranslation();
  const { title, text, chunk, retry = true } = describe(err, online, t);

  const tryAgain = () => {
    setNote(null);
    if (chunk && navigator.onLine !== false) {
      // A module that failed to load stays failed in this page: only a fresh load fetches it again.
      window.location.reload();
      return;
    }
    if (navigator.onLine === false) setNote(t("error.stillOffline"));
    // The same address again: its code, loader and drawing run anew.
    void navigate(location.pathname + location.search + location.hash, { replace: true });
  };

  return (
    <div data-testid="route-error" data-offline={online ? undefined : "true"}>
      <PageHeader title={title} subtitle={text} />
      <div className="flex flex-wrap gap-3">
        {retry ? (
          <Button size="lg" onClick={tryAgain}>
            {t("error.tryAgain")}
          </Button>
        ) : null}
        <Link to="/" className={linkButton}>
          {t("error.goHome")}
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
