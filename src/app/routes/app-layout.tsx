import { useTranslation } from "react-i18next";
import { LanguagePicker } from "@/features/auth/components/language-picker";
import { Suspense, useEffect, useState } from "react";
import { useQuery } from "@tanstack/react-query";
import { Link, NavigationType, NavLink, Outlet, useLocation, useNavigate, useNavigation, useNavigationType } from "react-router";
import { can } from "@shared/roles";
import { Button } from "@/components/ui/button";
import { StatusMark, type EntryStatus } from "@/components/ui/marks";
import { Notice } from "@/components/ui/notice";
import { Logo, Spinner } from "@/components/ui/logo";
import { navFor } from "@/config/nav";
import { MainMenu } from "../main-menu";
import { authKeys, useSignOut } from "@/features/auth/api/session";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { count } from "@/lib/format";
import { useAppOutbox, useAppUpdate, useOnline } from "../provider";

// The frame's loader is in ./app-layout.loader.ts: the router holds it from the start.

export { RouteError as ErrorBoundary } from "./route-error";

const bandButton = "min-h-14 shrink-0";

/**
 * The band under the header: no network, entries waiting on this tablet, entries the server
 * refused. The outbox itself runs above the router (src/app/provider.tsx); "Send now" wakes it.
 */
function OfflineBand({ logs }: { logs: boolean }) {
  const { t } = useTranslation();
  const online = useOnline();
  const { snapshot, sendNow } = useAppOutbox();
  const location = useLocation();
  const entries = snapshot?.entries ?? [];
  const waiting = entries.length;
  const blocked = entries.filter((e) => e.state === "blocked").length;
  const sending = entries.some((e) => e.state === "sending");
  const photos = entries.reduce((n, e) => n + e.photos.filter((p) => !p.photoId).length, 0);
  if (online && waiting === 0 && !snapshot?.storageError) return null;

  let status: EntryStatus = sending ? "sending" : entries.some((e) => e.state === "retrying") ? "retrying" : "waiting";
  let text: string | null;
  const onTablet = photos
    ? t("band.waitingWithPhotos", { count: waiting, n: count(waiting), photos: t("band.photos", { count: photos, n: count(photos) }) })
    : t("band.waiting", { count: waiting, n: count(waiting) });
  if (!online) text = waiting ? t("band.onTablet", { waiting: onTablet }) : logs ? t("band.offlineLogs") : t("band.offlineReads");
  else if (snapshot?.signedOut) text = t("band.signInToSend", { waiting: onTablet });
  else if (blocked === waiting)
    text = null; // the refusal below says it all
  // The last try failed (server unreachable, busy): say so rather than "sending".
  else if (!sending && entries.every((e) => e.state === "retrying" || e.state === "blocked")) text = t("band.willRetry", { waiting: onTablet });
  else text = t("band.sending", { waiting: onTablet });
  if (blocked) status = "blocked";
  if (snapshot?.signedOut) status = "signed-out";
  const tone = blocked ? "border-alarm-700 bg-alarm-100" : !online ? "border-brass-400 bg-[#fbf3df]" : "border-strand-600 bg-strand-50";

  return (
    <div className={`border-b-2 print:hidden ${tone}`} data-testid="offline-band" data-online={online} data-waiting={waiting} data-blocked={blocked}>
      <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-x-4 gap-y-2 px-4 py-2">
        <div role="status" className="flex min-w-0 flex-1 flex-wrap items-center gap-x-2 gap-y-1 text-base font-semibold text-ink-900">
          {online ? (
            <StatusMark status={status} label="" />
          ) : (
            // Read at a glance in glare: a dark tag, not a colour alone.
            <span className="rounded bg-ink-900 px-2.5 py-1 text-sm font-bold uppercase tracking-wide text-white">{t("band.offline")}</span>
          )}
          {text ? (
            <span>
              {online ? null : <span className="sr-only">{" — "}</span>}
              {text}
            </span>
          ) : null}
          {blocked ? (
            <span className={`font-semibold text-alarm-700 ${text ? "basis-full text-sm sm:basis-auto" : "text-base"}`} data-testid="offline-band-blocked">
              {text ? t("band.refusedOfThem", { count: blocked, n: count(blocked) }) : t("band.refused", { count: blocked, n: count(blocked) })}
            </span>
          ) : null}
          {snapshot?.storageError ? <p className="basis-full text-sm font-semibold text-alarm-700">{snapshot.storageError}</p> : null}
        </div>
        {blocked && location.pathname !== "/yard" ? (
          <Link to="/yard" className={`${bandButton} flex items-center rounded-md bg-strand-700 px-5 text-base font-semibold text-white hover:bg-strand-800`}>
            {t("band.fixRefused")}
          </Link>
        ) : null}
        {snapshot?.signedOut ? (
          <Link
            to={`/sign-in?next=${encodeURIComponent(location.pathname + location.search)}`}
            className={`${bandButton} flex items-center rounded-md border border-ink-300 bg-white px-5 text-base font-semibold text-ink-900 hover:bg-ink-50`}
          >
            {t("band.signInAgain")}
          </Link>
        ) : waiting > blocked ? (
          <Button size="lg" variant={blocked ? "secondary" : "primary"} className={bandButton} disabled={sending} onClick={sendNow}>
            {sending ? t("band.sendingButton") : t("band.sendNow")}
          </Button>
        ) : null}
      </div>
    </div>
  );
}

/** A new version is on the tablet: taken only when the person says so, never under a half-filled form. */
function UpdateBand() {
  const { t } = useTranslation();
  const update = useAppUpdate();
  if (!update.ready) return null;
  return (
    <div className="border-b-2 border-strand-600 bg-strand-50 print:hidden" data-testid="update-band">
      <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-x-4 gap-y-2 px-4 py-2">
        <p role="status" className="min-w-0 flex-1 text-base font-semibold text-ink-900">
          {t("band.newVersion")}
        </p>
        <Button size="lg" className={bandButton} onClick={update.apply}>
          {t("band.reload")}
        </Button>
      </div>
    </div>
  );
}

export function Component() {
  const { t } = useTranslation();
  const { data: me } = useQuery(authKeys.me());
  const about = useQuery(plantKeys.about());
  const signOut = useSignOut();
  const navigate = useNavigate();
  const navigation = useNavigation();
  const location = useLocation();
  const waiting = useAppOutbox().snapshot?.entries.length ?? 0;
  const [confirmSignOut, setConfirmSignOut] = useState(false);
  // The session ended (seen when the network came back, say): ask for a sign-in instead of a blank page.
  const ended = me === null && signOut.isIdle;
  useEffect(() => {
    if (ended) void navigate(`/sign-in?next=${encodeURIComponent(location.pathname + location.search)}&expired=1`, { replace: true });
  }, [ended, navigate, location.pathname, location.search]);
  if (!me) return null;
  const items = navFor(me.roles).map((i) => ({ ...i, label: t(`nav.items.${i.to}`, { defaultValue: i.label }) }));
  const doSignOut = () => {
    setConfirmSignOut(false);
    signOut.mutate(undefined, { onSuccess: () => void navigate("/sign-in", { replace: true }) });
  };

  return (
    <div className="flex min-h-dvh flex-col">
      <header className="bg-ink-900 text-white print:hidden">
        <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-x-6 gap-y-2 px-4 py-2">
          <NavLink to="/" className="flex items-center gap-2 py-1" aria-label={t("shell.home")}>
            <Logo />
            <span className="text-lg font-bold tracking-tight">Strandsight</span>
          </NavLink>
          {/* One row: by named groups when every screen would not fit (src/app/main-menu.tsx). */}
          <MainMenu
            items={items}
            roles={me.roles}
            className={`order-3 w-full pb-1 ${
              // A long menu (the administrator's) takes its own row rather than breaking into two.
              items.length > 6 ? "" : "lg:order-none lg:w-auto lg:flex-1 lg:pb-0"
            }`}
          />
          <div className="ml-auto flex items-center gap-3">
            <div className="text-right leading-tight">
              <div className="text-sm font-semibold" data-testid="user-name">
                {me.name}
              </div>
              <div className="text-xs text-ink-300">{me.roles.map((r) => t(`roles.${r}`)).join(" · ")}</div>
            </div>
            <LanguagePicker current={me.language} />
            <Button variant="secondary" className="min-h-12" disabled={signOut.isPending} onClick={() => (waiting > 0 ? setConfirmSignOut(true) : doSignOut())}>
              {signOut.isPending ? t("shell.signingOut") : t("shell.signOut")}
            </Button>
          </div>
        </div>
      </header>
      <OfflineBand logs={can(me.roles, "defects.log")} />
      <UpdateBand />
      {about.data?.demo ? (
        // A landmark of its own, so a screen reader's tour of the page's regions does not skip it.
        <aside
          data-testid="demo-band"
          aria-label={t("shell.demoData")}
          className="border-b border-brass-400 bg-[#fbf3df] px-4 py-1 text-center text-xs font-medium text-ink-800"
        >
          {t("shell.demoBanner")}
        </aside>
      ) : null}
      {confirmSignOut ? (
        <div className="mx-auto w-full max-w-7xl px-4 pt-3" data-testid="sign-out-waiting">
          <Notice tone="caution" title={t("shell.stillWaitingTitle")}>
            {t("shell.stillWaiting", { count: waiting, n: count(waiting) })}
            <span className="mt-2 flex flex-wrap gap-2">
              <Button variant="secondary" className="min-h-12" onClick={doSignOut}>
                {t("shell.signOutAnyway")}
              </Button>
              <Button className="min-h-12" onClick={() => setConfirmSignOut(false)}>
                {t("shell.staySignedIn")}
              </Button>
            </span>
          </Notice>
        </div>
      ) : null}
      {signOut.isError ? (
        <div className="mx-auto w-full max-w-7xl px-4 pt-3">
          <Notice tone="error">{t("shell.signOutFailed", { message: signOut.error.message })}</Notice>
        </div>
      ) : null}
      {navigation.state === "loading" ? (
        <div className="h-1 animate-pulse bg-strand-500 print:hidden" aria-hidden />
      ) : (
        <div className="h-1 print:hidden" aria-hidden />
      )}
      <main className="mx-auto w-full max-w-7xl flex-1 px-4 py-6 print:max-w-none print:p-0">
        {/* A screen whose texts' catalogue is still on its way waits here, inside the frame (src/i18n). */}
        <Suspense fallback={<Spinner />}>
          <Outlet />
        </Suspense>
        <ScrollToTop />
      </main>
    </div>
  );
}

/**
 * A new screen opens at its top (the page otherwise keeps the last screen's scroll, and a slab opened
 * from the yard's list lands halfway down). Only when the path changes: a screen that keeps its
 * filters in the query string (reports, worklists, the history's parts) stays put while they change;
 * Back and Forward are left to the browser. (React Router's ScrollRestoration does this too, but
 * costs the inspector's first load its 200 kB budget.)
 */
function ScrollToTop() {
  const { pathname } = useLocation();
  const how = useNavigationType();
  useEffect(() => {
    if (how !== NavigationType.Pop) scrollTo(0, 0);
  }, [pathname, how]);
  return null;
}
