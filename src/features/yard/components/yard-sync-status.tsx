import { Button } from "@/components/ui/button";
import { StatusMark } from "@/components/ui/marks";
import { dateTime, num, plural, time } from "@/lib/format";
import type { YardSetState } from "../offline/use-yard-sync";
import { useOnline } from "../use-online";

/** "Slabs on this tablet: 312, synced 09:41": what the yard can work with without a network. */
export function YardSyncStatus({ yard }: { yard: YardSetState }) {
  const online = useOnline();
  const stored = yard.stored;
  const count = stored?.data.slabs.length ?? 0;
  const syncedToday = stored ? new Date(stored.syncedAt).toDateString() === new Date().toDateString() : false;
  const synced = stored ? (syncedToday ? time(new Date(stored.syncedAt).toISOString()) : dateTime(new Date(stored.syncedAt).toISOString())) : null;
  let line: string;
  if (stored) line = `Slabs on this tablet: ${num(count)}, synced ${synced}`;
  else if (yard.syncing) line = "Keeping the yard's slabs on this tablet…";
  else line = online ? "No slabs on this tablet yet." : "No slabs on this tablet yet: open the yard once with the network.";
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
            Cast in the last {plural(stored.data.windowHours, "hour")}, and every slab not inspected yet (cast in the last {stored.data.uninspectedMaxDays}{" "}
            days).
            {stored.data.leftOut > 0
              ? ` The server holds ${plural(stored.data.leftOut, "more slab", "more slabs")}: find them with the network, or log them by id.`
              : ""}
          </p>
        ) : null}
        {!online ? <p className="text-sm font-semibold text-ink-800">Offline: the slab search uses the slabs on this tablet.</p> : null}
        {online && yard.error && !yard.offline ? <p className="text-sm font-semibold text-alarm-700">Could not update: {yard.error}</p> : null}
      </div>
      <Button variant="secondary" size="lg" onClick={() => void yard.syncNow()} disabled={!online || yard.syncing}>
        {yard.syncing ? "Updating…" : "Update now"}
      </Button>
    </div>
  );
}
