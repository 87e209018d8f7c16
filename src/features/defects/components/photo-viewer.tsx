import { useEffect, useRef, useState } from "react";
import { useTranslation } from "react-i18next";
import type { Photo } from "@shared/api/defects";

/** Thumbnails of a defect's photos; a tap opens the display version over the page. */
export function PhotoStrip({ photos, size = "h-28 w-28", label }: { photos: Photo[]; size?: string; label: string }) {
  const { t } = useTranslation("yard");
  const [open, setOpen] = useState<number | null>(null);
  const dialog = useRef<HTMLDialogElement>(null);
  useEffect(() => {
    const d = dialog.current;
    if (!d) return;
    if (open !== null && !d.open) d.showModal();
    if (open === null && d.open) d.close();
  }, [open]);
  if (photos.length === 0) return <p className="text-sm text-ink-600">{t("viewer.none")}</p>;
  const shown = open !== null ? photos[open] : undefined;
  return (
    <>
      <ul className="flex flex-wrap gap-2" aria-label={label}>
        {photos.map((p, i) => (
          <li key={p.id}>
            <button
              type="button"
              onClick={() => setOpen(i)}
              className="block rounded-md focus-visible:outline-4"
              aria-label={t("viewer.open", { n: i + 1, of: photos.length })}
            >
              <img src={p.thumbUrl} alt="" className={`${size} rounded-md border border-ink-300 object-cover`} data-testid="photo-thumb" />
            </button>
          </li>
        ))}
      </ul>
      <dialog
        ref={dialog}
        onClose={() => setOpen(null)}
        className="m-auto max-h-[92dvh] max-w-[94vw] rounded-lg bg-ink-950 p-0 text-white backdrop:bg-black/70"
        aria-label={t("viewer.dialog")}
      >
        {shown ? (
          <div className="flex flex-col">
            <div className="flex items-center justify-between gap-3 px-3 py-2">
              <span className="text-sm">{t("viewer.caption", { n: open! + 1, of: photos.length, width: shown.width, height: shown.height })}</span>
              <span className="flex gap-2">
                {photos.length > 1 ? (
                  <button type="button" className="min-h-12 rounded-md bg-ink-800 px-4 font-semibold" onClick={() => setOpen((open! + 1) % photos.length)}>
                    {t("viewer.next")}
                  </button>
                ) : null}
                <button type="button" className="min-h-12 rounded-md bg-white px-4 font-semibold text-ink-900" onClick={() => setOpen(null)}>
                  {t("viewer.close")}
                </button>
              </span>
            </div>
            <img src={shown.url} alt={t("photos.photo", { n: open! + 1 })} className="max-h-[80dvh] max-w-[92vw] object-contain" />
          </div>
        ) : null}
      </dialog>
    </>
  );
}
