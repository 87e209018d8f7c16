import { useEffect, useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { Link, useLocation, useNavigate, useParams, useSearchParams, type LoaderFunctionArgs } from "react-router";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { SeverityMark } from "@/components/ui/marks";
import { Notice } from "@/components/ui/notice";
import { authKeys } from "@/features/auth/api/session";
import { catalogueKeys } from "@/features/defects/api/catalogue.queries";
import { defectKeys, todayRange } from "@/features/defects/api/defects.queries";
import { DefectForm, type FormMode } from "@/features/defects/components/defect-form";
import { EntriesList, OutboxStatus } from "@/features/defects/components/entries-list";
import { useOutbox } from "@/features/defects/offline/use-outbox";
import { HotYardCaution } from "@/features/plant/components/hot-yard-caution";
import { slabKeys } from "@/features/slabs/api/slabs.queries";
import { CrossSection, SlabDrawing, type DrawnMark } from "@/features/slabs/components/slab-drawing";
import { num, plural } from "@/lib/format";
import { faceLabel, reviewLabel } from "@/lib/labels";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

// The inspector's logging screen: no chart library, nothing heavy (the yard's budget is 200 kB gzip).
export function makeLoader(qc: QueryClient) {
  return async ({ params, request }: LoaderFunctionArgs) => {
    await requireCapability(qc, "defects.log");
    void qc.prefetchQuery(catalogueKeys.list());
    const edit = Number(new URL(request.url).searchParams.get("edit"));
    if (edit) void qc.prefetchQuery(defectKeys.detail(edit));
    await qc.ensureQueryData(slabKeys.detail(params.slabId ?? ""));
    return null;
  };
}

const linkButton = "flex min-h-14 items-center justify-center rounded-md px-5 text-base font-semibold";

export function Component() {
  const { slabId = "" } = useParams();
  const [search] = useSearchParams();
  const navigate = useNavigate();
  const location = useLocation();
  const me = useQuery(authKeys.me());
  const slab = useQuery(slabKeys.detail(slabId));
  const catalogue = useQuery(catalogueKeys.list());
  const range = todayRange();
  const today = useQuery(defectKeys.mine(range.from));
  const outbox = useOutbox();
  const editId = Number(search.get("edit")) || null;
  const entryKey = search.get("entry");
  const editing = useQuery({ ...defectKeys.detail(editId ?? 0), enabled: editId !== null });
  const [flash, setFlash] = useState<string | null>(null);
  // A message handed over by navigate(…, { state }) after a change or a fix; the screen stays mounted.
  const handedOver = (location.state as { flash?: string } | null)?.flash;
  useEffect(() => {
    if (handedOver) setFlash(handedOver);
  }, [handedOver, location.key]);

  if (slab.isPending) return <Spinner label="Loading the slab" />;
  if (slab.isError) return <Notice tone="error">{slab.error.message}</Notice>;
  const s = slab.data;

  const onThisSlab = outbox.entries.filter((e) => e.slabId === s.slabId);
  let mode: FormMode = { kind: "new" };
  let modeProblem: string | null = null;
  if (editId !== null) {
    if (editing.data) {
      if (editing.data.canEdit) mode = { kind: "edit", defect: editing.data };
      else modeProblem = `This entry is ${reviewLabel(editing.data.reviewStatus).toLowerCase()}: after the review only a quality engineer can change it.`;
    } else if (editing.isError) modeProblem = editing.error.message;
  } else if (entryKey) {
    const entry = onThisSlab.find((e) => e.clientKey === entryKey);
    if (entry?.body && entry.defectId === null) mode = { kind: "fix", entry };
    else if (outbox.ready) modeProblem = "That entry has been sent meanwhile: change it from today's entries.";
  }
  const waitingForMode = (editId !== null && editing.isPending) || (entryKey !== null && !outbox.ready);

  // Existing defects, numbered like the slab page, and this tablet's waiting ones, dashed.
  const editedId = mode.kind === "edit" ? mode.defect.id : null;
  const fixedKey = mode.kind === "fix" ? mode.entry.clientKey : null;
  const marks: DrawnMark[] = [
    ...s.defects
      .map((d, i) => ({ d, n: i + 1 }))
      .filter(({ d }) => d.id !== editedId)
      .map(({ d, n }) => ({
        key: `d${d.id}`,
        face: d.face,
        alongMm: d.positionAlongMm,
        acrossMm: d.positionAcrossMm,
        lengthMm: d.lengthMm,
        widthMm: d.widthMm,
        severity: d.severity,
        label: n,
      })),
    ...onThisSlab
      .filter((e) => e.defectId === null && e.clientKey !== fixedKey)
      .map((e) => ({ key: e.clientKey, face: e.summary.face, alongMm: e.summary.alongMm, acrossMm: e.summary.acrossMm, severity: e.summary.severity, pending: true })),
  ];
  const mineHere = (today.data?.items ?? []).filter((d) => d.slabId === s.slabId && d.foundAt >= range.since);
  const leave = (message: string) => navigate(`/yard/slabs/${encodeURIComponent(s.slabId)}`, { replace: true, state: { flash: message } });

  return (
    <div className="mx-auto max-w-5xl space-y-4">
      <PageHeader
        title={`Slab ${s.slabId}`}
        subtitle={`Heat ${s.heatNo} · ${s.gradeCode} · strand ${s.strandNo}, piece ${s.pieceNo} · ${num(s.thicknessMm)} × ${num(s.widthMm)} × ${num(s.lengthMm)} mm`}
        actions={
          <Link to="/yard" className={`${linkButton} border-2 border-ink-900 bg-white text-ink-900 hover:bg-ink-50`}>
            Next slab →
          </Link>
        }
      />
      <HotYardCaution />
      <OutboxStatus outbox={outbox} />
      {flash ? (
        <div data-testid="flash">
          <Notice tone="ok" title="Saved">
            {flash}{" "}
            <button type="button" className="ml-2 min-h-12 font-semibold underline" onClick={() => setFlash(null)}>
              Dismiss
            </button>
          </Notice>
        </div>
      ) : null}
      {modeProblem ? <Notice tone="caution">{modeProblem}</Notice> : null}
      {mode.kind !== "new" ? (
        <Notice tone="info" title={mode.kind === "edit" ? "Changing an entry" : "Fixing a waiting entry"}>
          {mode.kind === "edit"
            ? `Entry of ${new Date(mode.defect.foundAt).toLocaleString("en-GB", { hour: "2-digit", minute: "2-digit", day: "numeric", month: "short" })}. Your changes are saved on the server.`
            : "It has not reached the server yet; after saving it is sent again."}
        </Notice>
      ) : null}

      {waitingForMode || catalogue.isPending ? (
        <Spinner label="Loading" />
      ) : catalogue.isError ? (
        <Notice tone="error">The defect catalogue could not be loaded: {catalogue.error.message}</Notice>
      ) : me.data ? (
        <DefectForm
          key={mode.kind === "edit" ? `edit-${mode.defect.id}` : mode.kind === "fix" ? `fix-${mode.entry.clientKey}` : "new"}
          slab={s}
          types={catalogue.data.types}
          userId={me.data.id}
          mode={mode}
          onCancel={mode.kind === "new" ? undefined : () => navigate(`/yard/slabs/${encodeURIComponent(s.slabId)}`, { replace: true })}
          onSaved={({ kind, summary, photoCount }) => {
            const what = `${summary.typeCode} ${summary.typeName}, severity ${summary.severity}${photoCount ? `, ${plural(photoCount, "photo")}` : ""}`;
            if (kind === "new") setFlash(`${what} — kept on this tablet and sent from there. Ready for the next defect on ${s.slabId}.`);
            else if (kind === "fix") leave(`${what} — changed and sent again.`);
            else leave(`${what} — changes saved.`);
          }}
          renderDrawing={({ position, onPlace, extent }) => (
            <div className="space-y-3">
              <SlabDrawing slab={s} marks={marks} placement={position} extent={extent} onPlace={onPlace} />
              <div className="space-y-1 border-t border-ink-100 pt-3">
                <p className="text-sm text-ink-700">
                  <b>Internal defect</b> (sulphur print, macro-etch)? Tap the cross-section below, seen from the head end, drawn to scale.
                </p>
                <CrossSection
                  slab={s}
                  marks={marks}
                  placement={position}
                  onPlace={(acrossMm) => onPlace({ face: "section", alongMm: position?.alongMm ?? 0, acrossMm })}
                />
              </div>
              {s.defects.length ? (
                <details className="rounded-md border border-ink-200 bg-ink-50 px-3 py-2 text-sm">
                  <summary className="flex min-h-12 cursor-pointer items-center font-semibold">On record for this slab: {plural(s.defects.length, "defect")}</summary>
                  <ol className="space-y-1 pb-2">
                    {s.defects.map((d, i) => (
                      <li key={d.id} className="flex flex-wrap items-center gap-x-3">
                        <span className="font-bold tabular-nums">{i + 1}.</span>
                        <span className="font-semibold">{d.typeCode}</span>
                        <span>{d.typeName}</span>
                        <SeverityMark severity={d.severity} />
                        <span className="text-ink-700">
                          {faceLabel(d.face)}, {num(d.positionAlongMm)} mm · {reviewLabel(d.reviewStatus)}
                        </span>
                      </li>
                    ))}
                  </ol>
                </details>
              ) : null}
            </div>
          )}
        />
      ) : null}

      <Card title={`Your entries on ${s.slabId} today`}>
        <EntriesList
          server={mineHere}
          outbox={{ ...outbox, entries: onThisSlab }}
          showSlab={false}
          empty="None yet on this slab."
        />
      </Card>
      <div className="flex flex-wrap gap-2 pb-4">
        <Link to="/yard" className={`${linkButton} bg-strand-700 text-white hover:bg-strand-800`}>
          Next slab
        </Link>
        <Link to={`/slabs/${encodeURIComponent(s.slabId)}`} className={`${linkButton} border border-ink-300 bg-white text-ink-900 hover:bg-ink-50`}>
          Slab record: conditions and all defects
        </Link>
      </div>
    </div>
  );
}

export const ErrorBoundary = RouteError;
