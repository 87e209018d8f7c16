import { useTranslation } from "react-i18next";
import { Button } from "@/components/ui/button";
import { StatusMark } from "@/components/ui/marks";
import { count as countOf, dateTime, num, time } from "@/lib/format";
import type { YardSetState } from "../offline/use-yard-sync";
import { useOnline } from "../use-online";

/** "Slabs on this tablet: 312, synced 09:41": what the yard can work with without a network. */
export function YardSyncStatus({ yard }: { yard: YardSetState }) {
  const { t } = useTranslation("yard");
  const online = useOnline();
  const stored = yard.stored;
  const count = stored?.data.slabs.length ?? 0;
  const syncedToday = stored ? new Date(stored.syncedAt).toDateString() === new Date().toDateString() : false;
  const synced = stored ? (syncedToday ? time(new Date(stored.syncedAt).toISOString()) : dateTime(new Date(stored.syncedAt).toISOString())) : null;
  let line: string;
  if (stored) line = t("syncStatus.stored", { n: num(count), synced });
  else if (yard.syncing) line = t("syncStatus.keeping");
  else line = online ? t("syncStatus.none") : t("syncStatus.noneOffline");
  return (
    <div
      className="flex flex-wrap items-center justify-between gap-3 rounded-lg border-2 border-ink-200 bg-white px-4 py-3"
      data-testid="yard-sync-status"
      data-count={count}
      data-synced-at={stored?.syncedAt ?? ""}
      role="status"
    >
      <div className="min-w-0 flex-1 space-y-1">
        <StatusMark status={stored ? "sent" : "waiting"} label={line} />
        {stored ? (
          <p className="text-xs text-ink-700">
            {t("syncStatus.window", { count: stored.data.windowHours, hours: countOf(stored.data.windowHours), days: stored.data.uninspectedMaxDays })}
            {stored.data.leftOut > 0 ? ` ${t("syncStatus.leftOut", { count: stored.data.leftOut, n: countOf(stored.data.leftOut) })}` : ""}
          </p>
        ) : null}
        {!online ? <p className="text-sm font-semibold text-ink-800">{t("syncStatus.offline")}</p> : null}
        {online && yard.error && !yard.offline ? (
          <p className="text-sm font-semibold text-alarm-700">{t("syncStatus.couldNotUpdate", { error: yard.error })}</p>
        ) : null}
      </div>
      <Button variant="secondary" size="lg" onClick={() => void yard.syncNow()} disabled={!online || yard.syncing}>
        {yard.syncing ? t("syncStatus.updating") : t("syncStatus.updateNow")}
      </Button>
    </div>
  );
}
