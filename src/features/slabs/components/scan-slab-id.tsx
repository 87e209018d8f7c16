import { useEffect, useRef, useState } from "react";
import { useTranslation } from "react-i18next";

/**
 * "Scan": reads a slab id from its label with the tablet's rear camera, in a sheet with a live
 * preview. QR, Code 128 and Data Matrix are read by the browser's own BarcodeDetector where it has
 * all three, else by ZXing's multi-format reader limited to those three (loaded only when the sheet
 * opens, so the yard's code stays small).
 *
 * The id read goes into the finder's field and Enter is pressed there — exactly what a hand scanner
 * (a keyboard wedge) does — so the camera opens the slab by the same rules and messages as typing.
 */

const FORMATS = ["qr_code", "code_128", "data_matrix"] as const;
/** A frame is looked at this often; ZXing's decode of one frame takes a few tens of ms. */
const SCAN_EVERY_MS = 150;
/** The camera goes off after this long without a read, to spare the battery. */
export const SCAN_IDLE_MS = 60_000;
/** Slab ids are at most 40 characters (the API's limit); anything else on a label is not one. */
const SLAB_ID_MAX = 40;

/** The slab id in a decoded text, or null when the label holds something else. */
export function slabIdFromCode(text: string): string | null {
  // GS1 separators and line ends some printers add around the data.
  // eslint-disable-next-line no-control-regex -- control characters are exactly what is stripped here
  const id = text.replace(/[\u0000-\u001f\u007f]/g, "").trim();
  if (!id || id.length > SLAB_ID_MAX || !/^[\x20-\x7e]+$/.test(id)) return null;
  return id;
}

interface CodeReader {
  engine: "browser" | "zxing";
  read(video: HTMLVideoElement): Promise<string | null>;
}

/** The Shape Detection API, not yet in TypeScript's DOM types. */
interface BarcodeDetectorLike {
  detect(source: CanvasImageSource): Promise<{ rawValue: string; format: string }[]>;
}
interface BarcodeDetectorClass {
  new (opts: { formats: string[] }): BarcodeDetectorLike;
  getSupportedFormats(): Promise<string[]>;
}

async function makeReader(): Promise<CodeReader> {
  const Native = (globalThis as { BarcodeDetector?: BarcodeDetectorClass }).BarcodeDetector;
  if (Native) {
    try {
      const supported = await Native.getSupportedFormats();
      // A detector without one of the three would miss some labels: ZXing reads them all.
      if (FORMATS.every((f) => supported.includes(f))) {
        const detector = new Native({ formats: [...FORMATS] });
        return {
          engine: "browser",
          read: async (video) => (await detector.detect(video))[0]?.rawValue ?? null,
        };
      }
    } catch {
      // Fall through to ZXing.
    }
  }
  const [{ BrowserMultiFormatReader }, { BarcodeFormat, DecodeHintType }] = await Promise.all([import("@zxing/browser"), import("@zxing/library")]);
  const hints = new Map<number, unknown>([
    [DecodeHintType.POSSIBLE_FORMATS, [BarcodeFormat.QR_CODE, BarcodeFormat.CODE_128, BarcodeFormat.DATA_MATRIX]],
    [DecodeHintType.TRY_HARDER, true],
  ]);
  const reader = new BrowserMultiFormatReader(hints as Map<never, unknown>);
  return {
    engine: "zxing",
    read: async (video) => {
      try {
        return reader.decode(video).getText();
      } catch {
        return null; // nothing readable in this frame
      }
    },
  };
}

/** Why the camera cannot scan; each has its words under `scan.problems`. */
type Problem = "insecure" | "refused" | "absent" | "busy" | "idle" | "failed";

function problemOf(err: unknown): Problem {
  const name = err instanceof DOMException || err instanceof Error ? err.name : "";
  if (name === "NotAllowedError" || name === "SecurityError" || name === "PermissionDeniedError") return "refused";
  if (name === "NotFoundError" || name === "OverconstrainedError" || name === "DevicesNotFoundError") return "absent";
  if (name === "NotReadableError" || name === "TrackStartError") return "busy";
  return "failed";
}

/**
 * Puts `text` into the field and presses Enter in it, as a keyboard-wedge scanner does. React keeps
 * its own copy of an input's value, so the value is set through the element's native setter and
 * announced with an input event; Enter follows once React has rendered the new text.
 */
function typeIntoField(field: HTMLInputElement, text: string) {
  // eslint-disable-next-line @typescript-eslint/unbound-method -- the setter is called with the field as `this` below
  const setValue = Object.getOwnPropertyDescriptor(HTMLInputElement.prototype, "value")?.set;
  setValue?.call(field, text);
  field.dispatchEvent(new Event("input", { bubbles: true }));
  field.focus();
  setTimeout(() => field.dispatchEvent(new KeyboardEvent("keydown", { key: "Enter", code: "Enter", bubbles: true, cancelable: true })), 0);
}

function ScanIcon({ className = "h-7 w-7" }: { className?: string }) {
  return (
    <svg viewBox="0 0 24 24" className={className} aria-hidden>
      <path
        d="M4 8V5a1 1 0 0 1 1-1h3M16 4h3a1 1 0 0 1 1 1v3M20 16v3a1 1 0 0 1-1 1h-3M8 20H5a1 1 0 0 1-1-1v-3"
        fill="none"
        stroke="currentColor"
        strokeWidth="2"
        strokeLinecap="round"
      />
      <path d="M7 9v6M10 9v6M13 9v6M17 9v6" fill="none" stroke="currentColor" strokeWidth="2" strokeLinecap="round" />
    </svg>
  );
}

function ScanSheet({ onRead, onClose }: { onRead: (id: string) => void; onClose: () => void }) {
  const { t } = useTranslation("slab");
  const dialog = useRef<HTMLDialogElement>(null);
  const video = useRef<HTMLVideoElement>(null);
  const [attempt, setAttempt] = useState(0);
  const [state, setState] = useState<"starting" | "looking" | Problem>("starting");
  const [engine, setEngine] = useState<CodeReader["engine"] | null>(null);
  const [notSlab, setNotSlab] = useState<string | null>(null);
  const read = useRef(onRead);
  read.current = onRead;

  useEffect(() => {
    const d = dialog.current;
    if (d && !d.open) d.showModal();
  }, []);

  useEffect(() => {
    let stopped = false;
    let stream: MediaStream | null = null;
    let timer: ReturnType<typeof setTimeout> | undefined;
    const stopCamera = () => {
      clearTimeout(timer);
      stream?.getTracks().forEach((t) => t.stop());
      if (video.current) video.current.srcObject = null;
    };
    setState("starting");
    setNotSlab(null);
    void (async () => {
      if (!navigator.mediaDevices?.getUserMedia) return setState(window.isSecureContext ? "absent" : "insecure");
      try {
        stream = await navigator.mediaDevices.getUserMedia({
          audio: false,
          video: { facingMode: { ideal: "environment" }, width: { ideal: 1280 }, height: { ideal: 720 } },
        });
      } catch (err) {
        if (!stopped) setState(problemOf(err));
        return;
      }
      if (stopped) return stopCamera();
      const v = video.current!;
      v.srcObject = stream;
      try {
        await v.play();
        const reader = await makeReader();
        if (stopped) return;
        setEngine(reader.engine);
        setState("looking");
        const started = Date.now();
        // A read that fails after the start (the detector throws) stops the camera and says so.
        const fail = () => {
          stopCamera();
          if (!stopped) setState("failed");
        };
        const tick = async () => {
          if (stopped) return;
          if (Date.now() - started > SCAN_IDLE_MS) {
            stopCamera();
            return setState("idle");
          }
          const text = v.readyState >= v.HAVE_CURRENT_DATA ? await reader.read(v) : null;
          if (stopped) return;
          if (text !== null) {
            const id = slabIdFromCode(text);
            if (id) {
              stopped = true;
              stopCamera();
              navigator.vibrate?.(80);
              return read.current(id);
            }
            setNotSlab(text.length > 60 ? `${text.slice(0, 57).trimEnd()}…` : text);
          }
          timer = setTimeout(() => void tick().catch(fail), SCAN_EVERY_MS);
        };
        void tick().catch(fail);
      } catch {
        stopCamera();
        if (!stopped) setState("failed");
      }
    })();
    return () => {
      stopped = true;
      stopCamera();
    };
  }, [attempt]);

  const problem = state !== "starting" && state !== "looking" ? state : null;
  return (
    <dialog
      ref={dialog}
      onClose={onClose}
      aria-labelledby="scan-title"
      className="m-0 h-dvh max-h-none w-full max-w-none bg-ink-950 p-0 text-white backdrop:bg-black/80"
      data-testid="scan-sheet"
      data-state={state}
      data-engine={engine ?? ""}
    >
      <div className="flex h-full flex-col">
        <div className="flex items-center justify-between gap-3 px-4 py-3">
          <h2 id="scan-title" className="flex items-center gap-2 text-xl font-bold">
            <ScanIcon /> {t("scan.title")}
          </h2>
          <button
            type="button"
            onClick={() => dialog.current?.close()}
            className="min-h-14 rounded-md bg-white px-6 text-base font-semibold text-ink-900 hover:bg-ink-100"
          >
            {t("scan.close")}
          </button>
        </div>
        <div className="relative min-h-0 flex-1 overflow-hidden bg-black">
          <video ref={video} muted playsInline autoPlay className="h-full w-full object-cover" aria-label={t("scan.cameraPicture")} />
          {state === "looking" ? (
            // Where to hold the label; the reader looks at the whole picture.
            <div
              aria-hidden
              className="pointer-events-none absolute inset-x-[10%] top-1/2 h-[34%] -translate-y-1/2 rounded-xl border-4 border-white/90 shadow-[0_0_0_100vmax_rgba(0,0,0,0.35)]"
            />
          ) : null}
          {problem ? (
            <div className="absolute inset-0 flex items-center justify-center p-6">
              <div
                role="alert"
                className="max-w-lg space-y-4 rounded-lg border-l-4 border-ember-600 bg-white p-5 text-ink-900"
                data-testid="scan-problem"
                data-problem={problem}
              >
                <p className="text-lg font-semibold">{problem === "idle" ? t("scan.cameraOff") : t("scan.cannotScan")}</p>
                <p className="text-base">{t(`scan.problems.${problem}`)}</p>
                <div className="flex flex-wrap gap-2">
                  {problem !== "insecure" && problem !== "absent" ? (
                    <button
                      type="button"
                      onClick={() => setAttempt((a) => a + 1)}
                      className="min-h-14 rounded-md bg-strand-700 px-6 text-base font-semibold text-white hover:bg-strand-800"
                    >
                      {t("scan.tryAgain")}
                    </button>
                  ) : null}
                  <button
                    type="button"
                    onClick={() => dialog.current?.close()}
                    className="min-h-14 rounded-md border-2 border-ink-300 bg-white px-6 text-base font-semibold text-ink-900 hover:bg-ink-50"
                  >
                    {t("scan.typeInstead")}
                  </button>
                </div>
              </div>
            </div>
          ) : null}
        </div>
        <div className="space-y-1 px-4 py-3 text-base" role="status">
          {state === "starting" ? <p>{t("scan.starting")}</p> : null}
          {state === "looking" ? <p className="font-semibold">{t("scan.hold")}</p> : null}
          {notSlab && state === "looking" ? (
            <p className="text-brass-400" data-testid="scan-not-slab">
              {t("scan.notSlab", { text: notSlab })}
            </p>
          ) : null}
          <p className="text-sm text-ink-300">{t("scan.safety")}</p>
        </div>
      </div>
    </dialog>
  );
}

/**
 * The big "Scan" button and its sheet. `fieldId` names the finder's input: the id read is typed
 * there and Enter pressed, as a hand scanner would.
 */
export function ScanSlabId({ fieldId }: { fieldId: string }) {
  const { t } = useTranslation("slab");
  const [open, setOpen] = useState(false);
  const onRead = (id: string) => {
    setOpen(false);
    const field = document.getElementById(fieldId);
    if (field instanceof HTMLInputElement) typeIntoField(field, id);
  };
  return (
    <>
      <button
        type="button"
        onClick={() => setOpen(true)}
        aria-haspopup="dialog"
        className="flex min-h-16 shrink-0 items-center justify-center gap-2 rounded-lg bg-ink-900 px-5 text-lg font-semibold text-white hover:bg-ink-800"
      >
        <ScanIcon /> {t("scan.button")}
      </button>
      {open ? (
        <ScanSheet
          onRead={onRead}
          onClose={() => {
            setOpen(false);
            document.getElementById(fieldId)?.focus();
          }}
        />
      ) : null}
    </>
  );
}
