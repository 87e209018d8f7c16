import { useState } from "react";
import { Trans, useTranslation } from "react-i18next";
import { Link } from "react-router";
import { Button } from "@/components/ui/button";
import { SeverityMark } from "@/components/ui/marks";
import { getOutbox } from "@/features/defects/offline/outbox-instance";
import type { OutboxEntryRecord, OutboxEntryView } from "@/features/defects/offline/outbox";
import { count, dateTime } from "@/lib/format";

/**
 * Refused because the server knows no slab by that id (an id typed or scanned offline, outside the
 * tablet's set): 404, or a 400 that names the slab id. Photos refused one by one are not this.
 */
export function refusedForSlabId(e: Pick<OutboxEntryRecord, "blocked" | "defectId" | "body">): boolean {
  const b = e.blocked;
  if (!b || b.photoKey || e.defectId !== null || !e.body) return false;
  return b.status === 404 || (b.status === 400 && /slab.?id/i.test(b.message));
}

function FixOne({ entry, onFixed, linkToEntry }: { entry: OutboxEntryView; onFixed?: (slabId: string) => void; linkToEntry: boolean }) {
  const { t } = useTranslation("yard");
  const [id, setId] = useState("");
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const inputId = `fix-${entry.clientKey}`;
  const send = async () => {
    const typed = id.trim().toUpperCase();
    if (!typed) return setError(t("slabIdFix.typeId"));
    if (typed === entry.slabId) return setError(t("slabIdFix.sameId", { slabId: typed }));
    setBusy(true);
    setError(null);
    try {
      await getOutbox().fixSlabId(entry.clientKey, typed);
      onFixed?.(typed);
    } catch (err) {
      setError(err instanceof Error ? err.message : String(err));
    } finally {
      setBusy(false);
    }
  };
  const at = entry.body?.found_at ?? new Date(entry.createdAt).toISOString();
  return (
    <li className="space-y-3 py-4" data-testid="slab-id-fix" data-client-key={entry.clientKey}>
      <div className="space-y-1">
        <p className="text-base font-bold text-ink-900">
          <span className="mr-2 tabular-nums">{entry.slabId}</span>
          <span className="mr-2 rounded bg-ink-900 px-1.5 py-0.5 text-xs font-bold tracking-wider text-white">{entry.summary.typeCode}</span>
          {entry.summary.typeName}
        </p>
        <p className="flex flex-wrap items-center gap-x-4 text-sm text-ink-700">
          <SeverityMark severity={entry.summary.severity} />
          <span>{t("slabIdFix.logged", { when: dateTime(at) })}</span>
          {entry.photos.length ? <span>{t("slabIdFix.photosKept", { count: entry.photos.length, n: count(entry.photos.length) })}</span> : null}
        </p>
        <p className="text-sm text-ink-800">
          <Trans t={t} i18nKey="slabIdFix.explain" values={{ slabId: entry.slabId }} components={{ 1: <b /> }} />
        </p>
      </div>
      <div className="flex flex-wrap items-end gap-3">
        <div className="flex min-w-0 flex-1 flex-col gap-1">
          <label htmlFor={inputId} className="text-sm font-semibold text-ink-800">
            {t("slabIdFix.fieldLabel")}
          </label>
          <input
            id={inputId}
            value={id}
            onChange={(e) => {
              setId(e.target.value);
              setError(null);
            }}
            onKeyDown={(e) => {
              if (e.key === "Enter") {
                e.preventDefault();
                void send();
              }
            }}
            maxLength={40}
            autoComplete="off"
            autoCapitalize="characters"
            spellCheck={false}
            placeholder={t("slabIdFix.placeholder")}
            className="min-h-14 w-full rounded-lg border-2 border-ink-300 bg-white px-3 text-xl font-semibold tracking-wide"
          />
        </div>
        <Button size="lg" onClick={() => void send()} disabled={busy}>
          {busy ? t("slabIdFix.sending") : t("slabIdFix.send")}
        </Button>
        {linkToEntry ? (
          <Link
            to={`/yard/slabs/${encodeURIComponent(entry.slabId)}?entry=${encodeURIComponent(entry.clientKey)}`}
            className="flex min-h-14 items-center rounded-md border border-ink-300 bg-white px-5 text-base font-semibold text-ink-900 hover:bg-ink-50"
          >
            {t("slabIdFix.seeEntry")}
          </Link>
        ) : null}
      </div>
      {error ? (
        <p role="alert" className="text-sm font-medium text-alarm-700">
          {error}
        </p>
      ) : null}
    </li>
  );
}

/** Entries that came back because their slab id is unknown: each with a field to correct it and resend. */
export function SlabIdFixes({
  entries,
  onFixed,
  linkToEntry = true,
}: {
  entries: readonly OutboxEntryView[];
  onFixed?: (slabId: string) => void;
  /** Off on the entry's own slab screen. */
  linkToEntry?: boolean;
}) {
  const { t } = useTranslation("yard");
  const refused = entries.filter(refusedForSlabId);
  if (refused.length === 0) return null;
  return (
    <section className="rounded-lg border-2 border-alarm-700 bg-white shadow-sm" aria-labelledby="slab-id-fixes-title" data-testid="slab-id-fixes">
      <header className="border-b border-ink-100 bg-alarm-100 px-4 py-3">
        <h2 id="slab-id-fixes-title" className="flex items-center gap-2 text-lg font-bold text-ink-900">
          <span aria-hidden className="flex h-6 w-6 items-center justify-center rounded-full border-2 border-current text-sm">
            ×
          </span>
          {t("slabIdFix.title")}
        </h2>
      </header>
      <ul className="divide-y divide-ink-100 px-4">
        {refused.map((e) => (
          <FixOne key={e.clientKey} entry={e} onFixed={onFixed} linkToEntry={linkToEntry} />
        ))}
      </ul>
    </section>
  );
}
