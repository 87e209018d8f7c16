import { useState } from "react";
import { useQuery } from "@tanstack/react-query";
import { Trans, useTranslation } from "react-i18next";
import { Link, useSearchParams } from "react-router";
import type { Defect, DefectReview, DefectType } from "@shared/api/defects";
import { SEVERITIES, type Severity } from "@shared/domain";
import { Button } from "@/components/ui/button";
import { Card, Fact } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { SeverityMark } from "@/components/ui/marks";
import { Notice } from "@/components/ui/notice";
import { ApiError } from "@/lib/api-client";
import { useTerms } from "@/i18n/terms";
import { count, DASH, dateTime, num, withUnit } from "@/lib/format";
import { defectKeys, useReviewDefect } from "../api/defects.queries";
import { ChoiceTiles } from "./choice-tiles";
import { PhotoStrip } from "./photo-viewer";
import { TypePicker } from "./type-picker";

/** Narrows the queue to one slab, e.g. to review a slab's entries together. */
function SlabFilter({ value, onChange }: { value: string; onChange: (v: string) => void }) {
  const { t } = useTranslation("review");
  const [text, setText] = useState(value);
  return (
    <form
      className="flex flex-wrap items-end gap-2"
      role="search"
      onSubmit={(e) => {
        e.preventDefault();
        onChange(text.trim().toUpperCase());
      }}
    >
      <div className="flex flex-col gap-1">
        <label htmlFor="review-slab" className="text-sm font-semibold text-ink-800">
          {t("queue.slabFilter")}
        </label>
        <input
          id="review-slab"
          value={text}
          onChange={(e) => setText(e.target.value)}
          autoComplete="off"
          placeholder={t("queue.slabPlaceholder")}
          className="min-h-11 w-56 rounded-md border border-ink-300 bg-white px-3 uppercase"
        />
      </div>
      <Button type="submit" variant="secondary">
        {t("queue.show")}
      </Button>
      {value ? (
        <Button
          variant="ghost"
          onClick={() => {
            setText("");
            onChange("");
          }}
        >
          {t("queue.showAllSlabs")}
        </Button>
      ) : null}
    </form>
  );
}

type Panel = "none" | "correct" | "reject";

function Decision({ defect, types, onDone }: { defect: Defect; types: DefectType[]; onDone: (text: string) => void }) {
  const { t } = useTranslation("review");
  const { term } = useTerms();
  const review = useReviewDefect();
  const [panel, setPanel] = useState<Panel>("none");
  const [typeCode, setTypeCode] = useState<string>(defect.typeCode);
  const [severity, setSeverity] = useState<Severity>(defect.severity as Severity);
  const [reason, setReason] = useState("");
  const [problem, setProblem] = useState<string | null>(null);

  const send = async (r: DefectReview, text: string) => {
    setProblem(null);
    try {
      await review.mutateAsync({ id: defect.id, review: r });
      onDone(text);
    } catch (err) {
      setProblem(err instanceof ApiError ? err.message : String(err));
    }
  };
  const what = { type: defect.typeCode, slab: defect.slabId };
  const changed = typeCode !== defect.typeCode || severity !== defect.severity;
  const typeChanged = typeCode !== defect.typeCode;
  const severityChanged = severity !== defect.severity;
  const corrected = typeChanged ? (severityChanged ? "both" : "type") : severityChanged ? "severity" : "none";

  return (
    <div className="space-y-4">
      {problem ? <Notice tone="error">{problem}</Notice> : null}
      <div className="flex flex-wrap gap-2">
        <Button size="lg" disabled={review.isPending} onClick={() => void send({ decision: "confirm" }, t("queue.done.confirmed", what))}>
          {t("queue.confirm")}
        </Button>
        <Button
          size="lg"
          variant={panel === "correct" ? "primary" : "secondary"}
          aria-expanded={panel === "correct"}
          onClick={() => setPanel(panel === "correct" ? "none" : "correct")}
        >
          {t("queue.correct")}
        </Button>
        <Button
          size="lg"
          variant={panel === "reject" ? "danger" : "secondary"}
          aria-expanded={panel === "reject"}
          onClick={() => setPanel(panel === "reject" ? "none" : "reject")}
        >
          {t("queue.reject")}
        </Button>
      </div>
      {panel === "correct" ? (
        <div className="space-y-4 rounded-lg border-2 border-strand-700 p-4" data-testid="correct-panel">
          <TypePicker types={types} value={typeCode} onChange={setTypeCode} />
          <ChoiceTiles
            label={t("queue.severity")}
            columns="grid-cols-2 md:grid-cols-4"
            value={severity}
            onChange={setSeverity}
            choices={SEVERITIES.map((s) => ({ value: s, name: `${term("severities", s)} (${s})`, label: <SeverityMark severity={s} large /> }))}
          />
          <Button
            size="lg"
            disabled={!changed || review.isPending}
            onClick={() =>
              void send(
                {
                  decision: "correct",
                  ...(typeCode !== defect.typeCode ? { type_code: typeCode } : {}),
                  ...(severity !== defect.severity ? { severity } : {}),
                },
                t(`queue.done.corrected.${corrected}`, { ...what, newType: typeCode, from: defect.severity, to: severity }),
              )
            }
          >
            {changed ? t("queue.saveCorrection") : t("queue.changeFirst")}
          </Button>
        </div>
      ) : null}
      {panel === "reject" ? (
        <div className="space-y-3 rounded-lg border-2 border-alarm-700 p-4" data-testid="reject-panel">
          <label htmlFor="reject-reason" className="block text-base font-semibold">
            <Trans t={t} i18nKey="queue.rejectReason" components={{ 1: <span className="font-normal text-ink-600" /> }} />
          </label>
          <textarea
            id="reject-reason"
            rows={3}
            value={reason}
            maxLength={2000}
            onChange={(e) => setReason(e.target.value)}
            className="w-full rounded-lg border-2 border-ink-300 px-3 py-2"
          />
          <Button
            variant="danger"
            size="lg"
            disabled={!reason.trim() || review.isPending}
            onClick={() => void send({ decision: "reject", note: reason.trim() }, t("queue.done.rejected", what))}
          >
            {t("queue.rejectEntry")}
          </Button>
        </div>
      ) : null}
      <p className="text-xs text-ink-600">{t("queue.recorded")}</p>
    </div>
  );
}

function DefectFacts({ d }: { d: Defect }) {
  const { t } = useTranslation("review");
  const { term } = useTerms();
  const size = d.lengthMm === null && d.widthMm === null ? null : { length: num(d.lengthMm), width: num(d.widthMm) };
  const depth = d.depthMm !== null ? withUnit(d.depthMm, "mm", 1) : null;
  return (
    <dl className="grid grid-cols-2 gap-x-6 gap-y-4 md:grid-cols-3">
      <Fact label={t("facts.slab")}>
        <Link to={`/slabs/${encodeURIComponent(d.slabId)}`} className="text-strand-700 underline underline-offset-2">
          {d.slabId}
        </Link>
        <div className="text-sm font-normal text-ink-700">
          {num(d.slabThicknessMm)} × {num(d.slabWidthMm)} × {num(d.slabLengthMm)} mm
        </div>
      </Fact>
      <Fact label={t("facts.heatGradeStrand")}>
        <Link to={`/heats/${encodeURIComponent(d.heatNo)}`} className="text-strand-700 underline underline-offset-2">
          {d.heatNo}
        </Link>{" "}
        · {d.gradeCode} · {d.strandNo}
      </Fact>
      <Fact label={t("facts.type")} testId="review-type">
        <span className="mr-2 rounded bg-ink-900 px-1.5 py-0.5 text-xs font-bold text-white">{d.typeCode}</span>
        {d.typeName}
      </Fact>
      <Fact label={t("facts.severity")}>
        <SeverityMark severity={d.severity} large />
      </Fact>
      <Fact label={t("facts.where")}>
        {term("faces", d.face)}
        <div className="text-sm font-normal text-ink-700">
          {t("facts.position", { along: withUnit(d.positionAlongMm, "mm"), across: withUnit(d.positionAcrossMm, "mm") })}
        </div>
      </Fact>
      <Fact label={t("facts.size")}>
        {size
          ? depth
            ? t("facts.sizeDeep", { ...size, depth })
            : `${size.length} × ${size.width} mm`
          : depth
            ? t("facts.notMeasuredDeep", { depth })
            : t("facts.notMeasured")}
      </Fact>
      <Fact label={t("facts.found")}>
        {term("stages", d.stage)}
        <div className="text-sm font-normal text-ink-700">{dateTime(d.foundAt)}</div>
      </Fact>
      <Fact label={t("facts.loggedBy")}>{d.createdByName ?? DASH}</Fact>
      <Fact label={t("facts.disposition")}>{d.disposition ? term("dispositions", d.disposition) : DASH}</Fact>
      {d.note ? (
        <div className="col-span-full">
          <dt className="text-xs font-semibold uppercase tracking-wide text-ink-600">{t("facts.note")}</dt>
          <dd className="mt-0.5 text-base">{t("facts.quoted", { note: d.note })}</dd>
        </div>
      ) : null}
    </dl>
  );
}

type QueueSort = "oldest" | "newest" | "severity";
const SORTS: QueueSort[] = ["oldest", "newest", "severity"];
const PAGE = 25;

/**
 * New entries, in the chosen order; each decision moves on to the next. The slab and the order are
 * kept in the address (`?slab=…&sort=…`), so a link or a reload opens the same queue.
 */
export function ReviewQueue({ types }: { types: DefectType[] }) {
  const { t } = useTranslation("review");
  const [params, setParams] = useSearchParams();
  const slab = (params.get("slab") ?? "").trim().toUpperCase();
  const sortParam = params.get("sort");
  const sort: QueueSort = SORTS.some((x) => x === sortParam) ? (sortParam as QueueSort) : "oldest";
  const [shown, setShown] = useState(PAGE);
  const filters = { reviewStatus: "new" as const, sort, ...(slab ? { slab } : {}) };
  const queue = useQuery({
    ...defectKeys.list({ ...filters, pageSize: shown }),
    // "Show more" keeps the list on screen while the longer one comes; another slab or order does not.
    placeholderData: (previous, previousQuery) => {
      const f = previousQuery?.queryKey[2] as { slab?: string; sort?: string } | undefined;
      return f && (f.slab ?? "") === slab && f.sort === sort ? previous : undefined;
    },
  });
  // With a slab chosen, how many wait on the others (for an honest word when this slab has none).
  const everywhere = useQuery({ ...defectKeys.list({ reviewStatus: "new", sort: "oldest", pageSize: 1 }), enabled: slab !== "" });
  const [picked, setPicked] = useState<number | null>(null);
  const [decided, setDecided] = useState<number[]>([]);
  const [last, setLast] = useState<string | null>(null);

  const setParam = (key: string, value: string) =>
    setParams(
      (p) => {
        const next = new URLSearchParams(p);
        if (value) next.set(key, value);
        else next.delete(key);
        return next;
      },
      { replace: true },
    );
  // The filter keeps one place in the tree whatever the queue's state, so text typed while the
  // queue loads is not thrown away by a remount when the answer comes.
  const filter = (
    <div className="flex flex-wrap items-end gap-3">
      <SlabFilter
        key={slab}
        value={slab}
        onChange={(v) => {
          setParam("slab", v);
          setPicked(null);
          setShown(PAGE);
        }}
      />
      <div className="flex flex-col gap-1">
        <label htmlFor="review-sort" className="text-sm font-semibold text-ink-800">
          {t("queue.order")}
        </label>
        <select
          id="review-sort"
          value={sort}
          onChange={(e) => {
            setParam("sort", e.target.value === "oldest" ? "" : e.target.value);
            setPicked(null);
          }}
          className="min-h-11 rounded-md border border-ink-300 bg-white px-3"
        >
          {SORTS.map((x) => (
            <option key={x} value={x}>
              {t(`queue.sorts.${x}`)}
            </option>
          ))}
        </select>
      </div>
    </div>
  );
  const data = queue.data;
  // Entries decided here leave at once, before the list comes back from the server.
  const items = data ? data.items.filter((d) => !decided.includes(d.id)) : [];
  const remaining = data ? Math.max(0, data.total - decided.filter((id) => data.items.some((d) => d.id === id)).length) : 0;
  const current = items.find((d) => d.id === picked) ?? items[0];
  const elsewhere = slab && everywhere.data ? Math.max(0, everywhere.data.total - remaining) : null;
  const noPhoto = t("queue.noPhoto");

  return (
    <div className="space-y-4">
      {last && data ? (
        <div data-testid="review-last">
          <Notice tone="ok" title={t("queue.doneTitle")}>
            {last} {current ? t("queue.nextBelow") : ""}
          </Notice>
        </div>
      ) : null}
      <div className="flex flex-wrap items-end justify-between gap-3">
        {data ? (
          <p className="text-base text-ink-800" data-testid="review-count">
            {remaining
              ? t(`queue.count.${slab ? "slab" : "all"}.${sort}`, { count: remaining, n: count(remaining), slab })
              : slab
                ? t("queue.nothingOnSlab", { slab })
                : t("queue.nothing")}
          </p>
        ) : (
          <span />
        )}
        {filter}
      </div>
      {queue.isPending ? <Spinner label={t("queue.loading")} /> : null}
      {queue.isError ? <Notice tone="error">{queue.error.message}</Notice> : null}
      {!data ? null : current ? (
        <div className="grid gap-4 lg:grid-cols-[minmax(0,2fr)_minmax(18rem,1fr)]">
          <Card title={t("queue.entryTitle", { id: current.id, when: dateTime(current.createdAt) })}>
            <div className="space-y-5" data-testid="review-current" data-defect-id={current.id}>
              <PhotoStrip photos={current.photos} label={t("queue.photos")} size="h-32 w-32" />
              <DefectFacts d={current} />
              <Decision
                key={current.id}
                defect={current}
                types={types}
                onDone={(text) => {
                  setDecided((ids) => [...ids, current.id]);
                  setPicked(null);
                  setLast(text);
                }}
              />
            </div>
          </Card>
          <Card title={t("queue.upNext")} bodyClassName="p-0">
            <ul className="divide-y divide-ink-100" aria-label={t("queue.listLabel")}>
              {items.map((d) => (
                <li key={d.id}>
                  <button
                    type="button"
                    onClick={() => setPicked(d.id)}
                    aria-current={d.id === current.id ? "true" : undefined}
                    className={`flex min-h-16 w-full items-center gap-3 px-3 py-2 text-left hover:bg-strand-50 ${d.id === current.id ? "bg-strand-50 shadow-[inset_4px_0_0_var(--color-strand-700)]" : ""}`}
                  >
                    {d.photos[0] ? (
                      <img src={d.photos[0].thumbUrl} alt="" className="h-12 w-12 shrink-0 rounded border border-ink-300 object-cover" />
                    ) : (
                      <span className="flex h-12 w-12 shrink-0 items-center justify-center rounded border border-dashed border-ink-300 text-[10px] text-ink-500">
                        {noPhoto}
                      </span>
                    )}
                    <span className="min-w-0 flex-1">
                      <span className="block truncate text-sm font-semibold">
                        {d.slabId} · {d.typeCode}
                      </span>
                      <span className="flex flex-wrap items-center gap-x-2 text-xs text-ink-600">
                        <SeverityMark severity={d.severity} /> {d.createdByName ?? ""} · {dateTime(d.createdAt)}
                      </span>
                    </span>
                  </button>
                </li>
              ))}
            </ul>
            <div className="flex flex-wrap items-center justify-between gap-2 px-3 py-2 text-sm text-ink-700" data-testid="review-paging">
              <span>
                {items.length < remaining
                  ? t("queue.showing", { shown: count(items.length), total: count(remaining) })
                  : t("queue.allShown", { total: count(remaining) })}
              </span>
              {items.length < remaining && shown < 200 ? (
                <Button variant="secondary" disabled={queue.isFetching} onClick={() => setShown((n) => Math.min(200, n + PAGE))}>
                  {t("queue.showMore", { n: Math.min(PAGE, remaining - items.length) })}
                </Button>
              ) : null}
            </div>
          </Card>
        </div>
      ) : (
        <Card>
          <p className="text-base text-ink-700" data-testid="review-empty">
            {!slab
              ? t("queue.empty")
              : elsewhere === null
                ? t("queue.emptySlab", { slab })
                : elsewhere > 0
                  ? t("queue.emptySlabElsewhere", { slab, count: elsewhere, n: count(elsewhere) })
                  : t("queue.emptyEverywhere", { slab })}
          </p>
        </Card>
      )}
    </div>
  );
}
