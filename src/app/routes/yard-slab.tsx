import { useEffect, useRef, useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { Trans, useTranslation } from "react-i18next";
import { Link, useLocation, useNavigate, useParams, useSearchParams, type LoaderFunctionArgs } from "react-router";
import type { YardSlab } from "@shared/api/yard";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { SeverityMark } from "@/components/ui/marks";
import { Notice } from "@/components/ui/notice";
import { authKeys } from "@/features/auth/api/session";
import { catalogueKeys } from "@/features/defects/api/catalogue.queries";
import { defectKeys, todayRange } from "@/features/defects/api/defects.queries";
import { DefectForm, type FormMode } from "@/features/defects/components/defect-form";
import { WindowFlags } from "@/features/windows/components/window-flags";
import { EntriesList, OutboxStatus } from "@/features/defects/components/entries-list";
import { useOutbox } from "@/features/defects/offline/use-outbox";
import { HotYardCaution } from "@/features/plant/components/hot-yard-caution";
import { slabKeys } from "@/features/slabs/api/slabs.queries";
import { CrossSection, SlabDrawing, type DrawnMark } from "@/features/slabs/components/slab-drawing";
import { yardKeys } from "@/features/yard/api/yard.queries";
import { NextSlabLink } from "@/features/yard/components/next-slab-link";
import { refusedForSlabId, SlabIdFixes } from "@/features/yard/components/slab-id-fixes";
import { useYardSet } from "@/features/yard/offline/use-yard-sync";
import { useOnline } from "@/features/yard/use-online";
import { findInYard, nextSlab, rolledWords, sizeForUnknown, waitingInYard, type NextSlab } from "@/features/yard/yard-set";
import { ApiError } from "@/lib/api-client";
import { useTerms } from "@/i18n/terms";
import { count, formatLocale, num, time } from "@/lib/format";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

// The inspector's logging screen: no chart library, nothing heavy (the yard's budget is 200 kB gzip).
export function makeLoader(qc: QueryClient) {
  return async ({ params, request }: LoaderFunctionArgs) => {
    await requireCapability(qc, "defects.log");
    void qc.prefetchQuery(catalogueKeys.list());
    const edit = Number(new URL(request.url).searchParams.get("edit"));
    if (edit) void qc.prefetchQuery(defectKeys.detail(edit));
    // The slab's record when the server answers; without a network (or for an id the server does not
    // know) the screen works from the slabs kept on this tablet instead of failing.
    await qc.ensureQueryData(slabKeys.detail(params.slabId ?? "")).catch(() => undefined);
    return null;
  };
}

const linkButton = "flex min-h-14 items-center justify-center rounded-md px-5 text-base font-semibold";

/** What the screen draws and lists of a defect on record (the server's record, or the inspector's own entries offline). */
interface ShownDefect {
  id: number;
  typeCode: string;
  typeName: string;
  face: string;
  positionAlongMm: number | null;
  positionAcrossMm: number | null;
  lengthMm: number | null;
  widthMm: number | null;
  severity: number;
  reviewStatus: string;
}

interface ShownSlab {
  slabId: string;
  heatNo: string | null;
  gradeCode: string | null;
  strandNo: number | null;
  pieceNo: number | null;
  lengthMm: number;
  widthMm: number;
  thicknessMm: number;
  castAt: string | null;
  defects: ShownDefect[];
  /** server: the slab's record; tablet: from the set (offline); unknown: not on this tablet, offline. */
  source: "server" | "tablet" | "unknown";
}

export function Component() {
  const { t } = useTranslation("yard");
  const { term } = useTerms();
  const { slabId: rawId = "" } = useParams();
  const slabId = rawId.trim().toUpperCase();
  const [search] = useSearchParams();
  const navigate = useNavigate();
  const location = useLocation();
  const online = useOnline();
  const me = useQuery(authKeys.me());
  const yard = useYardSet(me.data?.id);
  const server = useQuery(slabKeys.detail(rawId));
  const inSet = findInYard(yard.stored?.data.slabs, slabId);
  // A slab the tablet does not hold: whether it was rolled and its next piece come from the server.
  const yardOnline = useQuery({ ...yardKeys.slab(slabId), enabled: online && !inSet && yard.ready && server.isSuccess });
  const info: YardSlab | null = inSet ?? yardOnline.data ?? null;
  const catalogue = useQuery(catalogueKeys.list());
  const types = catalogue.data?.types ?? yard.stored?.data.catalogue.types;
  const range = todayRange();
  const today = useQuery(defectKeys.mine(range.from));
  const outbox = useOutbox();
  const editId = Number(search.get("edit")) || null;
  const entryKey = search.get("entry");
  const editing = useQuery({ ...defectKeys.detail(editId ?? 0), enabled: editId !== null });
  const [flash, setFlash] = useState<string | null>(null);
  // The word that an entry was saved is where the eye is: scrolled into view after the form's own
  // scroll back to its top (which alone left the word just above the screen's edge).
  const flashRef = useRef<HTMLDivElement>(null);
  useEffect(() => {
    if (flash) flashRef.current?.scrollIntoView({ behavior: "smooth" });
  }, [flash]);
  // A message handed over by navigate(…, { state }) after a change or a fix; the screen stays mounted.
  const handedOver = (location.state as { flash?: string } | null)?.flash;
  useEffect(() => {
    if (handedOver) setFlash(handedOver);
  }, [handedOver, location.key]);
  useEffect(() => setFlash((f) => (handedOver ? f : null)), [slabId, handedOver]);

  const serverMine = today.data?.items ?? (today.isError ? (yard.stored?.data.mine ?? []) : []);
  const notFound = server.isError && server.error instanceof ApiError && server.error.status === 404;
  const noNetwork = server.isError && !notFound;

  let s: ShownSlab | null = null;
  if (server.data) {
    const d = server.data;
    s = { ...d, heatNo: d.heatNo, defects: d.defects, source: "server" };
  } else if (noNetwork && inSet) {
    // Offline: the slab from the tablet's set; of its record, the inspector's own entries are known.
    const own = (yard.stored?.data.mine ?? []).filter((d) => d.slabId === slabId);
    s = { ...inSet, defects: own, source: "tablet" };
  } else if (noNetwork && yard.ready) {
    s = {
      slabId,
      heatNo: null,
      gradeCode: null,
      strandNo: null,
      pieceNo: null,
      castAt: null,
      ...sizeForUnknown(yard.stored?.data.slabs),
      defects: [],
      source: "unknown",
    };
  }

  const done = new Set([...outbox.entries.map((e) => e.slabId), ...serverMine.map((d) => d.slabId), slabId]);
  const slabsOnTablet = yard.stored?.data.slabs ?? [];
  let next: NextSlab | null = null;
  if (s && s.source !== "unknown" && s.heatNo !== null && s.strandNo !== null && s.pieceNo !== null) {
    next = nextSlab(
      slabsOnTablet,
      { slabId: s.slabId, heatNo: s.heatNo, strandNo: s.strandNo, pieceNo: s.pieceNo, castAt: s.castAt, nextPieceId: info?.nextPieceId },
      done,
    );
  } else {
    const w = waitingInYard(slabsOnTablet, done)[0];
    next = w ? { slabId: w.slabId, kind: "uninspected", why: t("nextSlab.notInspected", { heat: w.heatNo, strand: w.strandNo }) } : null;
  }

  const refusedHere = outbox.entries.filter((e) => e.slabId === slabId && refusedForSlabId(e));
  const onFixed = (to: string) => navigate(`/yard/slabs/${encodeURIComponent(to)}`, { state: { flash: t("slabPage.fixedFlash", { slabId: to }) } });

  if (server.isPending || (!s && !notFound && !yard.ready)) return <Spinner label={t("slabPage.loading")} />;
  if (!s) {
    // The server knows no slab by this id.
    return (
      <div className="mx-auto max-w-3xl space-y-4">
        <PageHeader title={t("slabPage.title", { slabId })} subtitle={t("slabPage.notOnRecord")} />
        <Notice tone="error">{server.error?.message}</Notice>
        <SlabIdFixes entries={refusedHere} onFixed={onFixed} linkToEntry={false} />
        <div className="flex flex-wrap gap-2 pb-4">
          <NextSlabLink next={next} />
          <Link to="/yard" className={`${linkButton} border border-ink-300 bg-white text-ink-900 hover:bg-ink-50`}>
            {t("slabPage.findAnother")}
          </Link>
        </div>
      </div>
    );
  }
  const slab = s;

  const onThisSlab = outbox.entries.filter((e) => e.slabId === slab.slabId);
  let mode: FormMode = { kind: "new" };
  let modeProblem: string | null = null;
  if (editId !== null) {
    if (editing.data) {
      if (editing.data.canEdit) mode = { kind: "edit", defect: editing.data };
      else modeProblem = t(`slabPage.locked.${editing.data.reviewStatus}`, { defaultValue: t("slabPage.locked.other", { status: editing.data.reviewStatus }) });
    } else if (editing.isError) modeProblem = editing.error.message;
  } else if (entryKey) {
    const entry = onThisSlab.find((e) => e.clientKey === entryKey);
    if (entry?.body && entry.defectId === null && !refusedForSlabId(entry)) mode = { kind: "fix", entry };
    else if (entry && refusedForSlabId(entry)) modeProblem = null;
    else if (outbox.ready) modeProblem = t("slabPage.sentMeanwhile");
  }
  const waitingForMode = (editId !== null && editing.isPending) || (entryKey !== null && !outbox.ready);

  // Existing defects, numbered like the slab page, and this tablet's waiting ones, dashed.
  const editedId = mode.kind === "edit" ? mode.defect.id : null;
  const fixedKey = mode.kind === "fix" ? mode.entry.clientKey : null;
  const marks: DrawnMark[] = [
    ...slab.defects
      .map((d, i) => ({ d, n: i + 1 }))
      .filter(({ d }) => d.id !== editedId)
      .map(({ d, n }) => ({
        key: `d${d.id}`,
        face: d.face as DrawnMark["face"],
        alongMm: d.positionAlongMm,
        acrossMm: d.positionAcrossMm,
        lengthMm: d.lengthMm,
        widthMm: d.widthMm,
        severity: d.severity,
        label: n,
      })),
    ...onThisSlab
      .filter((e) => e.defectId === null && e.clientKey !== fixedKey)
      .map((e) => ({
        key: e.clientKey,
        face: e.summary.face as DrawnMark["face"],
        alongMm: e.summary.alongMm,
        acrossMm: e.summary.acrossMm,
        severity: e.summary.severity,
        pending: true,
      })),
  ];
  const mineHere = serverMine.filter((d) => d.slabId === slab.slabId && d.foundAt >= range.since);
  const leave = (message: string) => void navigate(`/yard/slabs/${encodeURIComponent(slab.slabId)}`, { replace: true, state: { flash: message } });
  const rolled = info?.products.length ? rolledWords(info.products) : null;
  const synced = yard.stored ? time(new Date(yard.stored.syncedAt).toISOString()) : null;
  const subtitle =
    slab.source === "unknown"
      ? t("slabPage.unknownSubtitle")
      : t("slabPage.subtitle", {
          heat: slab.heatNo,
          grade: slab.gradeCode,
          strand: slab.strandNo,
          piece: slab.pieceNo,
          thickness: num(slab.thicknessMm),
          width: num(slab.widthMm),
          length: num(slab.lengthMm),
        });

  return (
    <div className="mx-auto max-w-5xl space-y-4" data-slab-source={slab.source}>
      <PageHeader title={t("slabPage.title", { slabId: slab.slabId })} subtitle={subtitle} actions={<NextSlabLink next={next} tone="outline" />} />
      <HotYardCaution />
      {slab.source === "tablet" ? (
        <Notice tone="info" title={t("slabPage.offline")}>
          {t("slabPage.offlineText", { synced })}
        </Notice>
      ) : null}
      {slab.source === "unknown" ? (
        <div data-testid="unknown-slab">
          <Notice tone="caution" title={t("slabPage.notOnTablet")}>
            {t("slabPage.notOnTabletText", { slabId: slab.slabId, thickness: num(slab.thicknessMm), width: num(slab.widthMm), length: num(slab.lengthMm) })}
          </Notice>
        </div>
      ) : null}
      {rolled ? (
        <div data-testid="rolled-notice">
          <Notice tone="caution" title={t("slabPage.alreadyRolled")}>
            {rolled}
          </Notice>
        </div>
      ) : null}
      {slab.source !== "unknown" ? <WindowFlags slabId={slab.slabId} /> : null}
      <SlabIdFixes entries={refusedHere} onFixed={onFixed} linkToEntry={false} />
      <OutboxStatus outbox={outbox} />
      {flash ? (
        <div data-testid="flash" className="scroll-mt-3 space-y-2" ref={flashRef}>
          <Notice tone="ok" title={t("slabPage.saved")}>
            {flash}{" "}
            <button type="button" className="ml-2 min-h-12 font-semibold underline" onClick={() => setFlash(null)}>
              {t("slabPage.dismiss")}
            </button>
          </Notice>
          <div className="flex flex-wrap gap-2">
            <NextSlabLink next={next} />
          </div>
        </div>
      ) : null}
      {modeProblem ? <Notice tone="caution">{modeProblem}</Notice> : null}
      {mode.kind !== "new" ? (
        <Notice tone="info" title={mode.kind === "edit" ? t("slabPage.changing") : t("slabPage.fixing")}>
          {mode.kind === "edit"
            ? t("slabPage.changingText", {
                when: new Intl.DateTimeFormat(formatLocale(), { hour: "2-digit", minute: "2-digit", day: "numeric", month: "short" }).format(
                  new Date(mode.defect.foundAt),
                ),
              })
            : t("slabPage.fixingText")}
        </Notice>
      ) : null}

      {waitingForMode || (catalogue.isPending && !types) ? (
        <Spinner label={t("slabPage.loadingShort")} />
      ) : !types ? (
        <Notice tone="error">{t("slabPage.noCatalogue", { message: catalogue.error?.message ?? "" })}</Notice>
      ) : me.data ? (
        <DefectForm
          key={mode.kind === "edit" ? `edit-${mode.defect.id}` : mode.kind === "fix" ? `fix-${mode.entry.clientKey}` : `new-${slab.slabId}`}
          slab={slab}
          types={types}
          userId={me.data.id}
          mode={mode}
          rolled={rolled}
          onCancel={mode.kind === "new" ? undefined : () => navigate(`/yard/slabs/${encodeURIComponent(slab.slabId)}`, { replace: true })}
          onSaved={({ kind, summary, photoCount }) => {
            const words = {
              code: summary.typeCode,
              name: summary.typeName,
              severity: summary.severity,
              slabId: slab.slabId,
              count: photoCount,
              n: count(photoCount),
            };
            const said = t(`slabPage.savedFlash.${kind}${photoCount ? "Photos" : ""}`, words);
            if (kind === "new") setFlash(said);
            else leave(said);
          }}
          renderDrawing={({ position, onPlace, extent }) => (
            <div className="space-y-3">
              <SlabDrawing slab={slab} marks={marks} placement={position} extent={extent} onPlace={onPlace} />
              <div className="space-y-1 border-t border-ink-100 pt-3">
                <p className="text-sm text-ink-700">
                  <Trans t={t} i18nKey="slabPage.internal" components={{ 1: <b /> }} />
                </p>
                <CrossSection
                  slab={slab}
                  marks={marks}
                  placement={position}
                  onPlace={(acrossMm) => onPlace({ face: "section", alongMm: position?.alongMm ?? 0, acrossMm })}
                />
              </div>
              {slab.defects.length ? (
                <details className="rounded-md border border-ink-200 bg-ink-50 px-3 py-2 text-sm">
                  <summary className="flex min-h-12 cursor-pointer items-center font-semibold">
                    {t(slab.source === "server" ? "slabPage.onRecord" : "slabPage.yourEntriesHere", {
                      count: slab.defects.length,
                      n: count(slab.defects.length),
                    })}
                  </summary>
                  <ol className="space-y-1 pb-2">
                    {slab.defects.map((d, i) => (
                      <li key={d.id} className="flex flex-wrap items-center gap-x-3">
                        <span className="font-bold tabular-nums">{i + 1}.</span>
                        <span className="font-semibold">{d.typeCode}</span>
                        <span>{d.typeName}</span>
                        <SeverityMark severity={d.severity} />
                        <span className="text-ink-700">
                          {t("slabPage.defectLine", {
                            face: term("faces", d.face),
                            along: num(d.positionAlongMm),
                            review: t(`reviewStatus.${d.reviewStatus}`, { defaultValue: d.reviewStatus }),
                          })}
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

      <Card title={t("slabPage.todayHere", { slabId: slab.slabId })}>
        <EntriesList server={mineHere} outbox={{ ...outbox, entries: onThisSlab }} showSlab={false} empty={t("slabPage.noneHere")} />
      </Card>
      <div className="flex flex-wrap gap-2 pb-4">
        <NextSlabLink next={next} />
        <Link to="/yard" className={`${linkButton} border border-ink-300 bg-white text-ink-900 hover:bg-ink-50`}>
          {t("slabPage.findAnother")}
        </Link>
        {slab.source === "server" ? (
          <Link to={`/slabs/${encodeURIComponent(slab.slabId)}`} className={`${linkButton} border border-ink-300 bg-white text-ink-900 hover:bg-ink-50`}>
            {t("slabPage.record")}
          </Link>
        ) : null}
      </div>
    </div>
  );
}

export const ErrorBoundary = RouteError;
