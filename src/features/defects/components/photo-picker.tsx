import { useEffect, useRef, useState } from "react";
import { useTranslation } from "react-i18next";
import { PHOTO_ACCEPT, PHOTO_MAX_BYTES, PHOTO_MAX_FILES } from "@shared/api/defects";
import { i18n } from "@/i18n";
import { bytes } from "@/lib/format";
import { newClientKey } from "@/lib/client-key";
import { scalePhotoForUpload } from "../offline/scale-photo";

export interface LocalPhoto {
  key: string;
  file: File;
}

const ACCEPTED = PHOTO_ACCEPT.split(",");

/** JPEG and PNG are made smaller on the tablet, so their size is judged after that. */
const SCALED_TYPES = ["image/jpeg", "image/png"];

function tooLarge(file: File): string {
  return i18n.t("yard:photos.tooLarge", { name: file.name, size: bytes(file.size), limit: bytes(PHOTO_MAX_BYTES) });
}

/**
 * Why a file cannot go up, said before it is stored; null when it can. `beforeScaling`: a JPEG or
 * PNG over the size limit may still fit once made smaller, so its size is checked afterwards.
 */
export function photoProblem(file: File, beforeScaling = false): string | null {
  const heic = /\.(heic|heif)$/i.test(file.name) || /hei[cf]/i.test(file.type);
  if (heic) return i18n.t("yard:photos.heic", { name: file.name });
  if (file.type && !ACCEPTED.includes(file.type)) return i18n.t("yard:photos.wrongType", { name: file.name });
  if (file.size > PHOTO_MAX_BYTES && !(beforeScaling && SCALED_TYPES.includes(file.type))) return tooLarge(file);
  return null;
}

/**
 * A thumbnail of a Blob on the device, revoked when it goes. A Blob read from IndexedDB is backed
 * by the browser's store: once its entry is sent and deleted, its bytes may be gone before this
 * list is redrawn, and an <img> pointed at it fails with a console error. So the bytes are read
 * first (a missing Blob then rejects quietly and the grey square stays) and shown from memory.
 * `photoKey` names the photo: the outbox hands out a new Blob object for the same photo on every
 * read, and a new object URL each time would revoke the one the <img> is still loading.
 */
export function BlobThumb({ blob, photoKey, alt, className = "h-20 w-20" }: { blob: Blob; photoKey?: string; alt: string; className?: string }) {
  const [url, setUrl] = useState<string | null>(null);
  const latest = useRef(blob);
  latest.current = blob;
  const identity = photoKey ?? blob;
  useEffect(() => {
    const blob = latest.current;
    let u: string | null = null;
    let live = true;
    blob
      .arrayBuffer()
      .then((bytes) => {
        if (!live) return;
        u = URL.createObjectURL(new Blob([bytes], { type: blob.type }));
        setUrl(u);
      })
      .catch(() => {
        if (live) setUrl(null);
      });
    return () => {
      live = false;
      if (u) URL.revokeObjectURL(u);
    };
  }, [identity]);
  return url ? (
    <img src={url} alt={alt} className={`${className} rounded-md border border-ink-300 object-cover`} />
  ) : (
    <div className={`${className} rounded-md bg-ink-100`} />
  );
}

/**
 * Photos for the entry: the camera opens from the file input's capture; several photos may be
 * taken one after the other. They are kept with the entry on the tablet and sent after it.
 *
 * A picked photo joins the list at once, as taken, and is swapped for its smaller copy when that is
 * ready (one at a time, to spare the tablet's memory). So a "Save" tapped meanwhile keeps the photo
 * (at full size) with its own entry, and a photo is never lost to the scaling.
 */
export function PhotoPicker({ photos, onChange, already = 0 }: { photos: LocalPhoto[]; onChange: (p: LocalPhoto[]) => void; already?: number }) {
  const { t } = useTranslation("yard");
  const [problems, setProblems] = useState<string[]>([]);
  const [preparing, setPreparing] = useState<ReadonlySet<string>>(new Set());
  const camera = useRef<HTMLInputElement>(null);
  const gallery = useRef<HTMLInputElement>(null);
  // The list as last handed to the form: a swap after an await must not undo a change made meanwhile.
  const latest = useRef(photos);
  latest.current = photos;
  const queue = useRef<Promise<void>>(Promise.resolve());
  const mounted = useRef(true);
  useEffect(() => {
    mounted.current = true;
    return () => void (mounted.current = false);
  }, []);
  const room = PHOTO_MAX_FILES - already - photos.length;

  const emit = (next: LocalPhoto[]) => {
    latest.current = next;
    onChange(next);
  };
  const done = (key: string) =>
    setPreparing((s) => {
      const n = new Set(s);
      n.delete(key);
      return n;
    });

  const makeSmaller = (photo: LocalPhoto) => {
    queue.current = queue.current
      .then(async () => {
        // Saved or removed meanwhile: nothing left to do.
        if (!mounted.current || !latest.current.some((p) => p.key === photo.key)) return done(photo.key);
        const result = await scalePhotoForUpload(photo.file);
        done(photo.key);
        if (!mounted.current || !latest.current.some((p) => p.key === photo.key)) return;
        if (result.file.size > PHOTO_MAX_BYTES) {
          // Still over the limit even smaller: said now rather than refused by the server later.
          setProblems((ps) => [...ps, tooLarge(result.file)]);
          emit(latest.current.filter((p) => p.key !== photo.key));
        } else if (result.scaled) {
          emit(latest.current.map((p) => (p.key === photo.key ? { key: p.key, file: result.file } : p)));
        }
      })
      .catch(() => done(photo.key));
  };

  const add = (list: FileList | null) => {
    if (!list) return;
    const next: LocalPhoto[] = [];
    const bad: string[] = [];
    for (const file of [...list]) {
      const p = photoProblem(file, true);
      if (p) bad.push(p);
      else if (next.length >= room) bad.push(t("photos.tooMany", { name: file.name, max: PHOTO_MAX_FILES }));
      else next.push({ key: newClientKey(), file });
    }
    setProblems(bad);
    if (next.length) {
      const scalable = next.filter((p) => SCALED_TYPES.includes(p.file.type));
      setPreparing((s) => new Set([...s, ...scalable.map((p) => p.key)]));
      emit([...latest.current, ...next]);
      scalable.forEach(makeSmaller);
    }
    if (camera.current) camera.current.value = "";
    if (gallery.current) gallery.current.value = "";
  };

  const button = "flex min-h-14 cursor-pointer items-center justify-center gap-2 rounded-lg px-5 text-base font-semibold";
  return (
    <div className="space-y-3">
      <div className="flex flex-wrap gap-2">
        <label className={`${button} bg-ink-900 text-white hover:bg-ink-800 ${room <= 0 ? "pointer-events-none opacity-50" : ""}`}>
          <svg viewBox="0 0 24 24" className="h-6 w-6" aria-hidden>
            <path d="M4 8h3l2-3h6l2 3h3v11H4z" fill="none" stroke="currentColor" strokeWidth="2" strokeLinejoin="round" />
            <circle cx="12" cy="13" r="3.5" fill="none" stroke="currentColor" strokeWidth="2" />
          </svg>
          {t("photos.take")}
          <input
            ref={camera}
            type="file"
            accept={PHOTO_ACCEPT}
            capture="environment"
            multiple
            className="sr-only"
            disabled={room <= 0}
            onChange={(e) => add(e.target.files)}
            data-testid="photo-camera"
          />
        </label>
        <label className={`${button} border-2 border-ink-300 bg-white text-ink-900 hover:border-ink-500 ${room <= 0 ? "pointer-events-none opacity-50" : ""}`}>
          {t("photos.gallery")}
          <input ref={gallery} type="file" accept={PHOTO_ACCEPT} multiple className="sr-only" disabled={room <= 0} onChange={(e) => add(e.target.files)} />
        </label>
      </div>
      {problems.map((p) => (
        <p key={p} role="alert" className="text-sm font-medium text-alarm-700">
          {p}
        </p>
      ))}
      {photos.length ? (
        <ul className="flex flex-wrap gap-3" aria-label={t("photos.toSend")}>
          {photos.map((p, i) => (
            <li key={p.key} className="flex flex-col items-center gap-1" data-testid="picked-photo" data-photo-ready={preparing.has(p.key) ? "no" : "yes"}>
              <BlobThumb blob={p.file} alt={t("photos.photo", { n: i + 1 })} className="h-24 w-24" />
              <span className="text-xs text-ink-600" data-testid="picked-photo-size">
                {preparing.has(p.key) ? t("photos.makingSmaller") : bytes(p.file.size)}
              </span>
              <button
                type="button"
                onClick={() => emit(latest.current.filter((x) => x.key !== p.key))}
                className="min-h-12 rounded-md px-3 text-sm font-semibold text-alarm-700 underline"
                aria-label={t("photos.removeLabel", { n: i + 1 })}
              >
                {t("photos.remove")}
              </button>
            </li>
          ))}
        </ul>
      ) : (
        // An entry that has photos already (shown above the picker) has no photo "yet" to speak of.
        <p className="text-sm text-ink-600" data-testid="photos-none">
          {t(already > 0 ? "photos.noneNew" : "photos.none")}
        </p>
      )}
    </div>
  );
}
