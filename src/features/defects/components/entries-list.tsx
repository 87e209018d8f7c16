import { useState } from "react";
import { Trans, useTranslation } from "react-i18next";
import { Link } from "react-router";
import type { Defect } from "@shared/api/defects";
import { Button } from "@/components/ui/button";
import { SeverityMark, StatusMark, type EntryStatus } from "@/components/ui/marks";
import { ProgressBar } from "@/components/ui/progress";
import { ApiError } from "@/lib/api-client";
import { useTerms } from "@/i18n/terms";
import { count, dateTime, num, time } from "@/lib/format";
import { useDeleteDefect } from "../api/defects.queries";
import { getOutbox } from "../offline/outbox-instance";
import type { OutboxEntryView, OutboxPhotoView, OutboxSnapshot } from "../offline/outbox";
import { BlobThumb } from "./photo-picker";

/** One line of the list: an entry on the server, one still on the tablet, or both (photos still going). */
interface Row {
  key: string;
  at: string;
  slabId: string;
  server: Defect | null;
  /** The outbox entries that belong to it: the entry itself, or photos added later. */
  local: OutboxEntryView[];
}

export function mergeEntries(server: Defect[], outbox: OutboxEntryView[]): Row[] {
  const rows: Row[] = server.map((d) => ({ key: `d${d.id}`, at: d.foundAt, slabId: d.slabId, server: d, local: [] }));
  const byId = new Map(rows.map((r) => [r.server!.id, r]));
  const byKey = new Map(rows.filter((r) => r.server!.clientKey).map((r) => [r.server!.clientKey!, r]));
  for (const e of outbox) {
    const row = (e.defectId !== null ? byId.get(e.defectId) : undefined) ?? byKey.get(e.clientKey);
    if (row) row.local.push(e);
    else rows.push({ key: e.clientKey, at: e.body?.found_at ?? new Date(e.createdAt).toISOString(), slabId: e.slabId, server: null, local: [e] });
  }
  return rows.sort((a, b) => (a.at < b.at ? 1 : a.at > b.at ? -1 : 0));
}

function statusOf(row: Row): EntryStatus {
  const main = row.local.find((e) => e.body) ?? row.local[0];
  if (main && !row.server && main.defectId === null) {
    return main.state === "sending" ? "sending" : main.state;
  }
  if (row.local.some((e) => e.state === "blocked")) return "blocked";
  if (row.local.length) return row.local.some((e) => e.state === "sending") ? "sending" : "photos-waiting";
  const d = row.server!;
  if (d.reviewStatus === "rejected") return "rejected";
  if (d.reviewStatus !== "new") return "reviewed";
  return "sent";
}

function PhotoProgress({ entry, photo, index }: { entry: OutboxEntryView; photo: OutboxPhotoView; index: number }) {
  const { t } = useTranslation("yard");
  const [error, setError] = useState<string | null>(null);
  const uploading = photo.progress !== undefined;
  return (
    <li
      className="flex items-center gap-3"
      data-testid="waiting-photo"
      data-photo-state={photo.photoId ? "sent" : photo.problem ? "refused" : uploading ? "uploading" : "waiting"}
    >
      <BlobThumb blob={photo.blob} photoKey={`${entry.clientKey}/${photo.key}`} alt={t("entries.photoOnTablet", { n: index + 1 })} className="h-14 w-14" />
      <div className="min-w-0 flex-1 space-y-1">
        {photo.photoId ? (
          <StatusMark status="sent" label={t("entries.photoStored")} />
        ) : photo.problem ? (
          <>
            <p className="text-sm font-semibold text-alarm-700">{photo.problem.message}</p>
            <Button
              variant="secondary"
              className="min-h-12"
              onClick={() =>
                getOutbox()
                  .removePhoto(entry.clientKey, photo.key)
                  .catch((e: Error) => setError(e.message))
              }
            >
              {t("entries.removePhoto")}
            </Button>
          </>
        ) : uploading ? (
          <ProgressBar
            label={t("photos.photo", { n: index + 1 })}
            value={photo.progress ?? null}
            detail={photo.progress === 1 ? t("entries.storingOnServer") : undefined}
          />
        ) : (
          <StatusMark status="waiting" label={t("entries.photoWaiting", { n: index + 1 })} />
        )}
        {error ? <p className="text-sm text-alarm-700">{error}</p> : null}
      </div>
    </li>
  );
}

function ConfirmButton({ label, confirmLabel, onConfirm, busy }: { label: string; confirmLabel: string; onConfirm: () => void; busy?: boolean }) {
  const { t } = useTranslation("yard");
  const [asking, setAsking] = useState(false);
  if (!asking)
    return (
      <Button variant="secondary" size="lg" onClick={() => setAsking(true)}>
        {label}
      </Button>
    );
  return (
    <span className="flex flex-wrap gap-2">
      <Button variant="danger" size="lg" onClick={onConfirm} disabled={busy}>
        {confirmLabel}
      </Button>
      <Button variant="ghost" size="lg" onClick={() => setAsking(false)}>
        {t("entries.keepIt")}
      </Button>
    </span>
  );
}

function EntryRow({ row, showSlab }: { row: Row; showSlab: boolean }) {
  const { t } = useTranslation("yard");
  const { term } = useTerms();
  const [error, setError] = useState<string | null>(null);
  const del = useDeleteDefect();
  const status = statusOf(row);
  const d = row.server;
  const main = row.local.find((e) => e.body) ?? row.local[0];
  const summary = d
    ? { typeCode: d.typeCode, typeName: d.typeName, severity: d.severity, face: d.face, alongMm: d.positionAlongMm, acrossMm: d.positionAcrossMm }
    : main!.summary;
  const localPhotos = row.local.flatMap((e) => e.photos.map((p) => ({ entry: e, photo: p })));
  const serverPhotos = d?.photos ?? [];
  const blocked = row.local.find((e) => e.state === "blocked" && e.blocked);
  const onTabletOnly = !d && main && main.defectId === null;
  const editLink = d
    ? `/yard/slabs/${encodeURIComponent(row.slabId)}?edit=${d.id}`
    : `/yard/slabs/${encodeURIComponent(row.slabId)}?entry=${encodeURIComponent(main!.clientKey)}`;

  const run = (p: Promise<unknown>) => p.catch((e: Error) => setError(e instanceof ApiError ? e.message : e.message));

  return (
    <li
      className="space-y-3 py-4"
      data-testid="entry"
      data-status={status}
      data-client-key={d?.clientKey ?? main?.clientKey ?? ""}
      data-defect-id={d?.id ?? main?.defectId ?? ""}
    >
      <div className="flex gap-4">
        <div className="relative shrink-0">
          {serverPhotos[0] ? (
            <img
              src={serverPhotos[0].thumbUrl}
              alt={t("entries.thumb", { slabId: row.slabId })}
              className="h-20 w-20 rounded-md border border-ink-300 object-cover"
              data-testid="entry-thumb"
            />
          ) : localPhotos[0] ? (
            <BlobThumb
              blob={localPhotos[0].photo.blob}
              photoKey={`${localPhotos[0].entry.clientKey}/${localPhotos[0].photo.key}`}
              alt={t("entries.thumbOnTablet", { slabId: row.slabId })}
              className="h-20 w-20"
            />
          ) : (
            <div className="flex h-20 w-20 items-center justify-center rounded-md border border-dashed border-ink-300 text-xs text-ink-500">
              {t("entries.noPhoto")}
            </div>
          )}
          {serverPhotos.length + localPhotos.filter((p) => !p.photo.photoId).length > 1 ? (
            <span className="absolute -right-2 -top-2 rounded-full bg-ink-900 px-2 py-0.5 text-xs font-bold text-white">
              {serverPhotos.length + localPhotos.filter((p) => !p.photo.photoId).length}
            </span>
          ) : null}
        </div>
        <div className="min-w-0 flex-1 space-y-1">
          <div className="flex flex-wrap items-baseline justify-between gap-x-4 gap-y-1">
            <div className="text-base font-bold text-ink-900">
              {showSlab ? <span className="mr-2 tabular-nums">{row.slabId}</span> : null}
              <span className="mr-2 rounded bg-ink-900 px-1.5 py-0.5 text-xs font-bold tracking-wider text-white">{summary.typeCode}</span>
              {summary.typeName}
            </div>
            <StatusMark status={status} />
          </div>
          <div className="flex flex-wrap items-center gap-x-4 gap-y-1 text-sm text-ink-700">
            <SeverityMark severity={summary.severity} />
            <span>{t("entries.where", { face: term("faces", summary.face), along: num(summary.alongMm) })}</span>
            <span>{time(row.at)}</span>
            {d && d.photos.length ? <span>{t("entries.photosStored", { count: d.photos.length, n: count(d.photos.length) })}</span> : null}
          </div>
          {d && d.reviewStatus !== "new" ? (
            <p className="text-sm text-ink-700" data-testid="entry-readonly">
              {t(`entries.reviewed.${d.reviewedByName ? "by" : "plain"}${d.reviewedAt ? "At" : ""}`, {
                status: t(`reviewStatus.${d.reviewStatus}`, { defaultValue: d.reviewStatus }),
                name: d.reviewedByName ?? "",
                when: d.reviewedAt ? dateTime(d.reviewedAt) : "",
              })}
            </p>
          ) : null}
          {d && d.reviewStatus === "new" && !d.canEdit ? <p className="text-sm text-ink-700">{t("entries.cannotChange")}</p> : null}
          {onTabletOnly && main!.state === "retrying" && main!.lastError ? (
            <p className="text-sm text-ink-700">
              {t("entries.notSentYet", { message: main!.lastError.message, count: main!.attempts, n: count(main!.attempts) })}
            </p>
          ) : null}
          {row.local.some((e) => e.state === "signed-out") ? <p className="text-sm text-ink-700">{t("entries.sessionEnded")}</p> : null}
        </div>
      </div>

      {blocked?.blocked && !blocked.blocked.photoKey ? (
        <p className="rounded-md border-l-4 border-alarm-700 bg-alarm-100 px-3 py-2 text-sm" role="alert">
          <Trans t={t} i18nKey="entries.refused" values={{ message: blocked.blocked.message }} components={{ 1: <b /> }} />
        </p>
      ) : null}

      {localPhotos.length ? (
        <ul className="space-y-2 pl-0 md:pl-24" aria-label={t("entries.photosOnTablet")}>
          {localPhotos.map(({ entry, photo }, i) => (
            <PhotoProgress key={photo.key} entry={entry} photo={photo} index={i} />
          ))}
        </ul>
      ) : null}

      <div className="flex flex-wrap gap-2 md:pl-24">
        {onTabletOnly && main!.state !== "sending" ? (
          <>
            <Link
              to={editLink}
              className={`flex min-h-14 items-center rounded-md px-5 text-base font-semibold ${
                main!.state === "blocked" ? "bg-strand-700 text-white hover:bg-strand-800" : "border border-ink-300 bg-white text-ink-900 hover:bg-ink-50"
              }`}
            >
              {main!.state === "blocked" ? t("entries.fixIt") : t("entries.change")}
            </Link>
            {main!.state === "blocked" || main!.state === "retrying" ? (
              <Button variant="secondary" size="lg" onClick={() => void run(getOutbox().retry(main!.clientKey))}>
                {main!.state === "blocked" ? t("entries.tryAgain") : t("entries.sendNow")}
              </Button>
            ) : null}
            <ConfirmButton
              label={t("entries.discard")}
              confirmLabel={t("entries.discardConfirm")}
              onConfirm={() => void run(getOutbox().discard(main!.clientKey))}
            />
          </>
        ) : null}
        {!onTabletOnly && row.local.some((e) => e.state === "retrying" || e.state === "blocked") ? (
          <Button variant="secondary" size="lg" onClick={() => void run(Promise.all(row.local.map((e) => getOutbox().retry(e.clientKey))))}>
            {t("entries.sendPhotos")}
          </Button>
        ) : null}
        {d && d.canEdit ? (
          <>
            <Link
              to={editLink}
              className="flex min-h-14 items-center rounded-md border border-ink-300 bg-white px-5 text-base font-semibold text-ink-900 hover:bg-ink-50"
            >
              {t("entries.change")}
            </Link>
            <ConfirmButton
              label={t("entries.delete")}
              confirmLabel={t("entries.deleteConfirm")}
              busy={del.isPending}
              onConfirm={() =>
                void run(
                  (async () => {
                    await del.mutateAsync(d.id);
                    // Photos still waiting for it have nowhere to go.
                    for (const e of row.local)
                      await getOutbox()
                        .discard(e.clientKey)
                        .catch(() => undefined);
                  })(),
                )
              }
            />
          </>
        ) : null}
      </div>
      {error ? <p className="text-sm font-medium text-alarm-700">{error}</p> : null}
    </li>
  );
}

/** The inspector's entries: today's from the server and whatever still waits on the tablet, newest first. */
export function EntriesList({ server, outbox, showSlab = true, empty }: { server: Defect[]; outbox: OutboxSnapshot; showSlab?: boolean; empty?: string }) {
  const { t } = useTranslation("yard");
  const rows = mergeEntries(server, outbox.entries);
  if (rows.length === 0)
    return (
      <p className="text-base text-ink-600" data-testid="entries-empty">
        {empty ?? t("entries.empty")}
      </p>
    );
  return (
    <ul className="divide-y divide-ink-100" data-testid="entries">
      {rows.map((r) => (
        <EntryRow key={r.key} row={r} showSlab={showSlab} />
      ))}
    </ul>
  );
}

/** How many entries wait on this tablet, and why; a shape and words. */
export function OutboxStatus({ outbox }: { outbox: OutboxSnapshot }) {
  const waiting = outbox.entries.length;
  const blocked = outbox.entries.filter((e) => e.state === "blocked").length;
  const photos = outbox.entries.reduce((n, e) => n + e.photos.filter((p) => !p.photoId).length, 0);
  const sending = outbox.entries.some((e) => e.state === "sending");
  const { t } = useTranslation("yard");
  let status: EntryStatus = "sent";
  let text = t("outboxStatus.allSent");
  if (waiting) {
    status = blocked ? "blocked" : sending ? "sending" : "waiting";
    // One whole sentence per case: why they wait, with or without photos.
    const why = blocked ? "Refused" : !outbox.online ? "Offline" : outbox.signedOut ? "SignedOut" : sending ? "Sending" : "";
    text = t(`outboxStatus.waiting${why}${photos ? "Photos" : ""}`, {
      count: waiting,
      n: count(waiting),
      photos: t("outboxStatus.photos", { count: photos, n: count(photos) }),
      blocked: count(blocked),
    });
  } else if (!outbox.online) {
    // The band at the top already says the tablet is offline; here only what waits.
    text = t("outboxStatus.nothingWaiting");
  }
  return (
    <div
      className={`flex flex-wrap items-center justify-between gap-2 rounded-lg border-2 px-4 py-3 ${blocked ? "border-alarm-700 bg-alarm-100" : waiting ? "border-brass-400 bg-[#fbf3df]" : "border-ink-200 bg-white"}`}
      data-testid="outbox-status"
      data-waiting={waiting}
      role="status"
    >
      <StatusMark status={status} label={text} />
      {!outbox.online && waiting ? <span className="text-sm font-semibold text-ink-800">{t("outboxStatus.offline")}</span> : null}
      {outbox.storageError ? <p className="w-full text-sm font-semibold text-alarm-700">{outbox.storageError}</p> : null}
      {outbox.otherUsersCount ? (
        <p className="w-full text-xs text-ink-700">{t("outboxStatus.otherUsers", { count: outbox.otherUsersCount, n: count(outbox.otherUsersCount) })}</p>
      ) : null}
    </div>
  );
}
