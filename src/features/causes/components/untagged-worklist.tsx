import { useState } from "react";
import { useQuery } from "@tanstack/react-query";
import { Link, useSearchParams } from "react-router";
import { Trans, useTranslation } from "react-i18next";
import type { BulkTagResult, CauseTaxonomy } from "@shared/api/causes";
import type { Defect, DefectType } from "@shared/api/defects";
import { SEVERITIES } from "@shared/domain";
import { Button } from "@/components/ui/button";
import { Card } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { SeverityMark } from "@/components/ui/marks";
import { Notice } from "@/components/ui/notice";
import { defectKeys, type DefectFilters } from "@/features/defects/api/defects.queries";
import { ApiError } from "@/lib/api-client";
import { count, dateTime } from "@/lib/format";
import { useTerms } from "@/i18n/terms";
import { useTagDefect } from "../api/causes.queries";
import { BulkTagPanel } from "./bulk-tag-panel";
import { TaggingForm } from "./tagging-form";
import { DateField } from "@/components/ui/date-field";

type Order = "newest" | "oldest" | "severity";
/** The orders; their words are under causes.worklist.order (the choice) and .orderWords (inside a sentence). */
const ORDERS: { value: Order }[] = [{ value: "newest" }, { value: "oldest" }, { value: "severity" }];

/** A label of a shared list inside an English sentence starts small; German nouns keep their capital. */
const inSentence = (language: string, label: string) => (language === "de" ? label : label.toLowerCase());
const PAGE_SIZE = 50;
/** A tagging changes every defect list (the slab page's chips, the review queue's entries). */
const AFFECTS = [defectKeys.lists()];

const inputClass = "min-h-11 rounded-md border border-ink-300 bg-white px-3";

/** The worklist's filters as they sit in the address, so a link or a reload opens the same list. */
function useWorklistFilters() {
  const [params, setParams] = useSearchParams();
  const orderParam = params.get("sort");
  const sevParam = Number(params.get("minSeverity"));
  const filters = {
    type: params.get("type") ?? "",
    heat: (params.get("heat") ?? "").trim().toUpperCase(),
    from: params.get("from") ?? "",
    to: params.get("to") ?? "",
    minSeverity: SEVERITIES.includes(sevParam as (typeof SEVERITIES)[number]) ? sevParam : 0,
    sort: (ORDERS.some((o) => o.value === orderParam) ? orderParam : "newest") as Order,
    page: Math.max(1, Math.floor(Number(params.get("page")) || 1)),
  };
  const set = (changes: Partial<Record<keyof typeof filters, string>>) =>
    setParams(
      (p) => {
        const next = new URLSearchParams(p);
        for (const [k, v] of Object.entries(changes)) {
          if (v) next.set(k, v);
          else next.delete(k);
        }
        // Another filter starts from the first page.
        if (!("page" in changes)) next.delete("page");
        return next;
      },
      { replace: true },
    );
  return { filters, set };
}

function Filters({
  types,
  filters,
  set,
}: {
  types: DefectType[];
  filters: ReturnType<typeof useWorklistFilters>["filters"];
  set: ReturnType<typeof useWorklistFilters>["set"];
}) {
  const { t } = useTranslation("process");
  const { term } = useTerms();
  const [heat, setHeat] = useState(filters.heat);
  return (
    <form
      role="search"
      aria-label={t("causes.worklist.narrow")}
      className="flex flex-wrap items-end gap-3"
      onSubmit={(e) => {
        e.preventDefault();
        set({ heat: heat.trim().toUpperCase() });
      }}
    >
      <label className="flex flex-col gap-1 text-sm font-semibold text-ink-800">
        {t("causes.worklist.defectType")}
        <select className={inputClass} value={filters.type} onChange={(e) => set({ type: e.target.value })} data-testid="worklist-type">
          <option value="">{t("causes.worklist.everyType")}</option>
          {types.map((dt) => (
            <option key={dt.code} value={dt.code}>
              {dt.code} · {dt.name}
            </option>
          ))}
        </select>
      </label>
      <label className="flex flex-col gap-1 text-sm font-semibold text-ink-800">
        {t("causes.worklist.leastSeverity")}
        <select className={inputClass} value={filters.minSeverity || ""} onChange={(e) => set({ minSeverity: e.target.value })} data-testid="worklist-severity">
          <option value="">{t("causes.worklist.anySeverity")}</option>
          {SEVERITIES.filter((s) => s > 1).map((s) => (
            <option key={s} value={s}>
              {t("causes.worklist.severityOrWorse", { label: term("severities", s), s })}
            </option>
          ))}
        </select>
      </label>
      <DateField
        unreadable="keep"
        label={t("causes.worklist.foundFromLabel")}
        className="flex flex-col gap-1 text-sm font-semibold text-ink-800"
        inputClassName={`${inputClass} font-normal`}
        value={filters.from}
        onChange={(v) => set({ from: v })}
      />
      <DateField
        unreadable="keep"
        label={t("causes.worklist.toLabel")}
        className="flex flex-col gap-1 text-sm font-semibold text-ink-800"
        inputClassName={`${inputClass} font-normal`}
        value={filters.to}
        onChange={(v) => set({ to: v })}
      />
      <div className="flex items-end gap-2">
        <label className="flex flex-col gap-1 text-sm font-semibold text-ink-800">
          {t("causes.worklist.heat")}
          <input
            className={`${inputClass} w-36 uppercase`}
            value={heat}
            onChange={(e) => setHeat(e.target.value)}
            placeholder={t("causes.worklist.heatPlaceholder")}
            autoComplete="off"
            data-testid="worklist-heat"
          />
        </label>
        <Button type="submit" variant="secondary">
          {t("causes.worklist.show")}
        </Button>
      </div>
      <label className="flex flex-col gap-1 text-sm font-semibold text-ink-800">
        {t("causes.worklist.orderLabel")}
        <select className={inputClass} value={filters.sort} onChange={(e) => set({ sort: e.target.value === "newest" ? "" : e.target.value })}>
          {ORDERS.map((o) => (
            <option key={o.value} value={o.value}>
              {t(`causes.worklist.order.${o.value}`)}
            </option>
          ))}
        </select>
      </label>
      {filters.type || filters.heat || filters.from || filters.to || filters.minSeverity ? (
        <Button
          variant="ghost"
          onClick={() => {
            setHeat("");
            set({ type: "", heat: "", from: "", to: "", minSeverity: "" });
          }}
        >
          {t("causes.worklist.clearFilters")}
        </Button>
      ) : null}
    </form>
  );
}

/** One defect's tagging in place; told when written so the list moves on to the next defect. */
function TagInPlace({ defect, taxonomy, onDone, onCancel }: { defect: Defect; taxonomy: CauseTaxonomy; onDone: (text: string) => void; onCancel: () => void }) {
  const { t, i18n } = useTranslation("process");
  const { term } = useTerms();
  const tag = useTagDefect(defect.id, { affects: AFFECTS });
  const [problem, setProblem] = useState<string | null>(null);
  return (
    <div className="space-y-3 rounded-md border-2 border-strand-600 bg-strand-50 p-3" data-testid="worklist-tag-form">
      <p className="text-sm font-semibold">
        {t("causes.worklist.causesOf", {
          code: defect.typeCode,
          name: defect.typeName,
          slab: defect.slabId,
          face: inSentence(i18n.language, term("faces", defect.face)),
        })}
      </p>
      {problem ? <Notice tone="error">{problem}</Notice> : null}
      <TaggingForm
        name={`worklist-${defect.id}`}
        taxonomy={taxonomy}
        submitLabel={tag.isPending ? t("ui.adding") : t("causes.worklist.addAndNext")}
        busy={tag.isPending}
        onCancel={onCancel}
        onSubmit={(v) => {
          setProblem(null);
          // The promise, not mutate's callbacks: the list refreshed by the write may come back without
          // this defect and take this editor off the screen first; the worklist must still hear it.
          tag.mutateAsync(v).then(
            (r) => onDone(t("causes.worklist.addedTo", { code: defect.typeCode, slab: defect.slabId, names: r.current.map((c) => c.tagName).join(", ") })),
            (err: unknown) => setProblem(err instanceof ApiError ? err.message : String(err)),
          );
        }}
      />
    </div>
  );
}

/**
 * The process engineer's worklist: live defects that carry no cause yet (rejected entries need
 * none), filtered by type, heat, period and severity, tagged one at a time in place or many at once.
 * A tagged defect leaves the list; the one-at-a-time editor moves on to the next defect.
 */
export function UntaggedWorklist({ types, taxonomy }: { types: DefectType[]; taxonomy: CauseTaxonomy }) {
  const { t } = useTranslation("process");
  const { filters, set } = useWorklistFilters();
  const query: DefectFilters = {
    causes: "none",
    sort: filters.sort,
    page: filters.page,
    pageSize: PAGE_SIZE,
    ...(filters.type ? { type: filters.type } : {}),
    ...(filters.heat ? { heat: filters.heat } : {}),
    ...(filters.from ? { from: filters.from } : {}),
    ...(filters.to ? { to: filters.to } : {}),
    ...(filters.minSeverity ? { minSeverity: filters.minSeverity } : {}),
  };
  // The page stays on screen while the next answer comes, so a tagged row leaving does not blank it.
  const list = useQuery({ ...defectKeys.list(query), placeholderData: (previous) => previous });
  const [selected, setSelected] = useState<number[]>([]);
  const [editing, setEditing] = useState<number | null>(null);
  const [bulkOpen, setBulkOpen] = useState(false);
  const [done, setDone] = useState<string | null>(null);
  // Tagged here: hidden at once, before the list comes back without them.
  const [tagged, setTagged] = useState<number[]>([]);

  const data = list.data;
  const items = data ? data.items.filter((d) => !tagged.includes(d.id)) : [];
  const total = data ? Math.max(0, data.total - tagged.filter((id) => data.items.some((d) => d.id === id)).length) : 0;
  const pages = data ? Math.max(1, Math.ceil(data.total / PAGE_SIZE)) : 1;
  const shownSelected = selected.filter((id) => items.some((d) => d.id === id));
  const allShown = items.length > 0 && shownSelected.length === items.length;
  const orderWords = t(`causes.worklist.orderWords.${filters.sort}`);
  const narrowed = [
    filters.type ? t("causes.worklist.narrowed.type", { type: filters.type }) : null,
    filters.heat ? t("causes.worklist.narrowed.heat", { heat: filters.heat }) : null,
    filters.minSeverity ? t("causes.worklist.narrowed.severity", { s: filters.minSeverity }) : null,
    filters.from && filters.to
      ? t("causes.worklist.narrowed.foundFromTo", { from: filters.from, to: filters.to })
      : filters.from
        ? t("causes.worklist.narrowed.foundFrom", { from: filters.from })
        : filters.to
          ? t("causes.worklist.narrowed.foundTo", { to: filters.to })
          : null,
  ].filter(Boolean);
  const filterWords = narrowed.join(t("causes.worklist.narrowed.separator"));

  const goPage = (page: number) => {
    setSelected([]);
    setEditing(null);
    set({ page: page > 1 ? String(page) : "" });
  };
  const afterTagged = (ids: number[], text: string) => {
    setTagged((t) => [...t, ...ids]);
    setSelected((s) => s.filter((id) => !ids.includes(id)));
    setDone(text);
  };

  return (
    <div className="space-y-4">
      <Filters key={filters.heat} types={types} filters={filters} set={set} />
      {done ? (
        <div data-testid="worklist-done">
          <Notice tone="ok">{done}</Notice>
        </div>
      ) : null}
      {list.isPending ? <Spinner label={t("causes.worklist.loading")} /> : null}
      {list.isError ? <Notice tone="error">{list.error.message}</Notice> : null}
      {data ? (
        <p className="text-base text-ink-800" data-testid="worklist-count">
          {total
            ? narrowed.length
              ? t("causes.worklist.countNarrowed", { count: total, n: count(total), filters: filterWords, order: orderWords })
              : t("causes.worklist.count", { count: total, n: count(total), order: orderWords })
            : narrowed.length
              ? t("causes.worklist.noneMatches", { filters: filterWords })
              : t("causes.worklist.nothingToTag")}
        </p>
      ) : null}
      {shownSelected.length ? (
        <div className="flex flex-wrap items-center gap-3 rounded-md border border-strand-300 bg-white px-3 py-2" data-testid="worklist-selection">
          <span className="text-sm font-semibold">{t("causes.worklist.selected", { count: shownSelected.length, n: count(shownSelected.length) })}</span>
          <Button onClick={() => setBulkOpen(true)} disabled={bulkOpen} data-testid="worklist-bulk-open">
            {t("causes.worklist.tagSelected")}
          </Button>
          <Button variant="ghost" onClick={() => setSelected([])}>
            {t("causes.worklist.clearSelection")}
          </Button>
        </div>
      ) : null}
      {bulkOpen && shownSelected.length ? (
        <Card title={t("causes.worklist.sameCauses", { count: shownSelected.length, n: count(shownSelected.length) })}>
          <BulkTagPanel
            key={shownSelected.join(",")}
            selection={{ kind: "defects", ids: shownSelected }}
            describe={t("causes.worklist.theSelected", { count: shownSelected.length, n: count(shownSelected.length) })}
            affects={AFFECTS}
            onClose={() => setBulkOpen(false)}
            onWritten={(r: BulkTagResult, causes: string[]) => {
              setBulkOpen(false);
              afterTagged(
                shownSelected,
                t("causes.worklist.bulkDone", {
                  count: r.defects,
                  n: count(r.defects),
                  causes: causes.join(", "),
                  taggings: t("causes.worklist.taggings", { count: r.tagged, n: count(r.tagged) }),
                }),
              );
            }}
          />
        </Card>
      ) : null}
      {items.length ? (
        <Card bodyClassName="p-0 overflow-x-auto">
          <table className="w-full text-left text-sm" data-testid="worklist-table">
            <caption className="sr-only">{t("untaggedPage.title")}</caption>
            <thead className="border-b border-ink-200 bg-ink-50 text-xs uppercase tracking-wide text-ink-600">
              <tr>
                <th scope="col" className="w-12 px-3 py-2">
                  <label className="flex min-h-11 items-center">
                    <input
                      type="checkbox"
                      className="h-5 w-5"
                      checked={allShown}
                      onChange={(e) => setSelected(e.target.checked ? items.map((d) => d.id) : [])}
                    />
                    <span className="sr-only">{t("causes.worklist.selectAll")}</span>
                  </label>
                </th>
                <th scope="col" className="px-2 py-2">
                  {t("causes.worklist.colSlab")}
                </th>
                <th scope="col" className="px-2 py-2">
                  {t("causes.worklist.colDefect")}
                </th>
                <th scope="col" className="px-2 py-2">
                  {t("causes.worklist.colSeverity")}
                </th>
                <th scope="col" className="px-2 py-2">
                  {t("causes.worklist.colFound")}
                </th>
                <th scope="col" className="px-2 py-2">
                  <span className="sr-only">{t("causes.worklist.colTagging")}</span>
                </th>
              </tr>
            </thead>
            <tbody className="divide-y divide-ink-100">
              {items.map((d, i) => (
                <WorklistRow
                  key={d.id}
                  d={d}
                  selected={selected.includes(d.id)}
                  onSelect={(on) => setSelected((s) => (on ? [...s, d.id] : s.filter((x) => x !== d.id)))}
                  editing={editing === d.id}
                  onEdit={() => {
                    setEditing(d.id);
                    setDone(null);
                  }}
                  editor={
                    <TagInPlace
                      defect={d}
                      taxonomy={taxonomy}
                      onCancel={() => setEditing(null)}
                      onDone={(text) => {
                        afterTagged([d.id], text);
                        // Moves on to the next defect of the list, if any.
                        setEditing(items[i + 1]?.id ?? null);
                      }}
                    />
                  }
                />
              ))}
            </tbody>
          </table>
        </Card>
      ) : null}
      {data && pages > 1 ? (
        <nav className="flex flex-wrap items-center gap-3 text-sm" aria-label={t("causes.worklist.pages")} data-testid="worklist-paging">
          <Button variant="secondary" disabled={filters.page <= 1} onClick={() => goPage(filters.page - 1)}>
            {t("causes.worklist.previous", { n: count(PAGE_SIZE) })}
          </Button>
          <span>{t("causes.worklist.page", { page: count(filters.page), pages: count(pages) })}</span>
          <Button variant="secondary" disabled={filters.page >= pages} onClick={() => goPage(filters.page + 1)}>
            {t("causes.worklist.next", { n: count(PAGE_SIZE) })}
          </Button>
        </nav>
      ) : null}
    </div>
  );
}

function WorklistRow({
  d,
  selected,
  onSelect,
  editing,
  onEdit,
  editor,
}: {
  d: Defect;
  selected: boolean;
  onSelect: (on: boolean) => void;
  editing: boolean;
  onEdit: () => void;
  editor: React.ReactNode;
}) {
  const { t } = useTranslation("process");
  const { term } = useTerms();
  return (
    <>
      <tr className={selected || editing ? "bg-strand-50" : undefined} data-testid="worklist-row" data-defect-id={d.id}>
        <td className="px-3 py-1">
          <label className="flex min-h-11 items-center">
            <input type="checkbox" className="h-5 w-5" checked={selected} onChange={(e) => onSelect(e.target.checked)} />
            <span className="sr-only">{t("causes.worklist.selectOne", { code: d.typeCode, slab: d.slabId })}</span>
          </label>
        </td>
        <td className="px-2 py-1">
          <Link to={`/slabs/${encodeURIComponent(d.slabId)}`} className="font-semibold text-strand-700 underline underline-offset-2">
            {d.slabId}
          </Link>
          <div className="text-xs text-ink-600">
            <Trans
              t={t}
              i18nKey="causes.worklist.heatLine"
              values={{ heat: d.heatNo, grade: d.gradeCode, strand: d.strandNo }}
              components={{ 1: <Link to={`/heats/${encodeURIComponent(d.heatNo)}`} className="underline underline-offset-2" /> }}
            />
          </div>
        </td>
        <td className="px-2 py-1">
          <span className="mr-1 rounded bg-ink-900 px-1.5 py-0.5 text-xs font-bold text-white">{d.typeCode}</span>
          {d.typeName}
          <div className="text-xs text-ink-600">{term("faces", d.face)}</div>
        </td>
        <td className="px-2 py-1">
          <SeverityMark severity={d.severity} />
        </td>
        <td className="px-2 py-1 whitespace-nowrap">{dateTime(d.foundAt)}</td>
        <td className="px-2 py-1 text-right">
          {!editing ? (
            <Button variant="secondary" onClick={onEdit} data-testid="worklist-tag">
              {t("causes.worklist.tag")}
            </Button>
          ) : null}
        </td>
      </tr>
      {editing ? (
        <tr>
          <td colSpan={6} className="px-3 py-3">
            {editor}
          </td>
        </tr>
      ) : null}
    </>
  );
}
