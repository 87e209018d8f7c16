import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { Link, useNavigate } from "react-router";
import { createColumnHelper, flexRender, getCoreRowModel, useReactTable, type SortingState } from "@tanstack/react-table";
import type { HeatList, HeatListQuery, HeatRow } from "@shared/api/heats";
import { Button } from "@/components/ui/button";
import { count, date, num, time } from "@/lib/format";
import { PAGE_SIZES } from "./heat-list-params";

type SortKey = HeatListQuery["sort"];
const col = createColumnHelper<HeatRow>();

/**
 * A text with one number in it, looked up once per draw and filled in per row: the table's cells
 * ask no catalogue (a page holds hundreds of them).
 */
const fillIn = (t: TFunction<"heats">, key: "heatsTable.sequenceHeat" | "heatsTable.affectedOf", name: string) => {
  const text = t(key, { [name]: `{{${name}}}` });
  return (value: number | string) => text.replace(`{{${name}}}`, String(value));
};

function columnsOf(t: TFunction<"heats">) {
  const sequenceHeat = fillIn(t, "heatsTable.sequenceHeat", "n");
  const affectedOf = fillIn(t, "heatsTable.affectedOf", "slabs");
  const affectedTitle = t("heatsTable.affectedTitle");
  return [
    col.accessor("heatNo", {
      id: "heatNo",
      header: t("columns.heat"),
      cell: (c) => (
        <Link to={`/heats/${encodeURIComponent(c.getValue())}`} className="font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2">
          {c.getValue()}
        </Link>
      ),
    }),
    col.accessor("sequenceNo", {
      id: "sequenceNo",
      header: t("columns.sequence"),
      cell: (c) =>
        c.getValue() ? (
          <span className="block leading-tight">
            <span className="whitespace-nowrap">{c.getValue()}</span>
            {c.row.original.sequencePosition ? <span className="block text-xs text-ink-600">{sequenceHeat(c.row.original.sequencePosition)}</span> : null}
          </span>
        ) : (
          "—"
        ),
    }),
    col.accessor("gradeCode", {
      id: "gradeCode",
      header: t("columns.grade"),
      cell: (c) => (
        <span className="block leading-tight">
          <span className="whitespace-nowrap">{c.getValue()}</span>
          <span className="block text-xs text-ink-600">{c.row.original.familyCode}</span>
        </span>
      ),
    }),
    col.accessor("castStart", {
      id: "castStart",
      header: t("columns.castStart"),
      cell: (c) => (
        <span className="block leading-tight">
          <span className="whitespace-nowrap">{date(c.getValue())}</span>
          <span className="block text-xs text-ink-600">{time(c.getValue())}</span>
        </span>
      ),
    }),
    col.accessor("castingSpeedMPerMin", { id: "castingSpeed", header: t("columns.speed"), meta: { numeric: true }, cell: (c) => num(c.getValue(), 2) }),
    col.accessor("superheatC", { id: "superheat", header: t("columns.superheat"), meta: { numeric: true }, cell: (c) => num(c.getValue(), 1) }),
    col.accessor("embrCurrentA", {
      id: "embrCurrentA",
      header: t("columns.brake"),
      enableSorting: false,
      meta: { numeric: true },
      cell: (c) => num(c.getValue(), 0),
    }),
    col.accessor("senDepthMm", {
      id: "senDepthMm",
      header: t("columns.sen"),
      enableSorting: false,
      meta: { numeric: true },
      cell: (c) => num(c.getValue(), 0),
    }),
    col.accessor("slabs", { id: "slabs", header: t("columns.slabs"), meta: { numeric: true } }),
    col.accessor("defects", { id: "defects", header: t("columns.defects"), meta: { numeric: true } }),
    col.accessor("affectedSlabs", {
      id: "affectedSlabs",
      header: t("columns.affected"),
      enableSorting: false,
      meta: { numeric: true },
      cell: (c) => (
        <span className="whitespace-nowrap" title={affectedTitle}>
          {c.getValue()} <span className="text-ink-600">{affectedOf(c.row.original.slabs)}</span>
        </span>
      ),
    }),
  ];
}

/**
 * The heats list: sorting and paging happen on the server (TanStack Table in manual mode), the
 * table only draws the page it is given.
 */
export function HeatsTable({
  data,
  sort,
  dir,
  page,
  pageSize,
  loading,
  onSort,
  onPage,
}: {
  data: HeatList;
  sort: SortKey;
  dir: "asc" | "desc";
  page: number;
  pageSize: number;
  loading: boolean;
  onSort: (sort: SortKey, dir: "asc" | "desc") => void;
  onPage: (page: number, pageSize: number) => void;
}) {
  const { t } = useTranslation("heats");
  const columns = useMemo(() => columnsOf(t), [t]);
  const navigate = useNavigate();
  const sorting: SortingState = useMemo(() => [{ id: sort, desc: dir === "desc" }], [sort, dir]);
  const pageCount = Math.max(1, Math.ceil(data.total / pageSize));
  const table = useReactTable({
    data: data.items,
    columns,
    state: { sorting, pagination: { pageIndex: page - 1, pageSize } },
    manualSorting: true,
    manualPagination: true,
    pageCount,
    enableSortingRemoval: false,
    sortDescFirst: true,
    onSortingChange: (updater) => {
      const next = typeof updater === "function" ? updater(sorting) : updater;
      const first = next[0];
      if (first) onSort(first.id as SortKey, first.desc ? "desc" : "asc");
    },
    getCoreRowModel: getCoreRowModel(),
    getRowId: (r) => r.heatNo,
  });
  const firstRow = data.total === 0 ? 0 : (page - 1) * pageSize + 1;
  const lastRow = Math.min(data.total, page * pageSize);

  return (
    <div className="space-y-3">
      <div className={`overflow-x-auto transition-opacity ${loading ? "opacity-60" : ""}`} aria-busy={loading}>
        <table className="w-full text-sm" data-testid="heats-table">
          <thead>
            {table.getHeaderGroups().map((hg) => (
              <tr key={hg.id} className="border-b-2 border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
                {hg.headers.map((h) => {
                  const numeric = (h.column.columnDef.meta as { numeric?: boolean } | undefined)?.numeric;
                  const sorted = h.column.getIsSorted();
                  return (
                    <th
                      key={h.id}
                      className={`px-1 py-1 align-bottom lg:px-1.5 ${numeric ? "text-right" : ""}`}
                      aria-sort={sorted === "asc" ? "ascending" : sorted === "desc" ? "descending" : undefined}
                    >
                      {h.column.getCanSort() ? (
                        <button
                          type="button"
                          onClick={h.column.getToggleSortingHandler()}
                          className={`inline-flex min-h-10 items-center gap-0.5 text-left uppercase underline decoration-ink-300 decoration-dotted underline-offset-4 hover:text-ink-900 ${sorted ? "text-ink-900" : ""} ${numeric ? "flex-row-reverse text-right" : ""}`}
                          title={t("heatsTable.sortBy", { column: String(h.column.columnDef.header) })}
                        >
                          {flexRender(h.column.columnDef.header, h.getContext())}
                          <span aria-hidden className={`w-3 shrink-0 text-[10px] ${sorted ? "" : "hidden text-ink-400 xl:inline"}`}>
                            {sorted === "asc" ? "▲" : sorted === "desc" ? "▼" : "⇅"}
                          </span>
                        </button>
                      ) : (
                        <span className="inline-flex min-h-10 items-center">{flexRender(h.column.columnDef.header, h.getContext())}</span>
                      )}
                    </th>
                  );
                })}
              </tr>
            ))}
          </thead>
          <tbody>
            {table.getRowModel().rows.map((row) => (
              <tr
                key={row.id}
                data-testid="heat-row"
                className="cursor-pointer border-b border-ink-100 hover:bg-strand-50"
                onClick={(e) => {
                  if ((e.target as HTMLElement).closest("a")) return;
                  navigate(`/heats/${encodeURIComponent(row.original.heatNo)}`);
                }}
              >
                {row.getVisibleCells().map((cell) => {
                  const numeric = (cell.column.columnDef.meta as { numeric?: boolean } | undefined)?.numeric;
                  return (
                    <td key={cell.id} data-col={cell.column.id} className={`px-1 py-2 lg:px-1.5 ${numeric ? "text-right tabular-nums" : ""}`}>
                      {flexRender(cell.column.columnDef.cell, cell.getContext())}
                    </td>
                  );
                })}
              </tr>
            ))}
          </tbody>
        </table>
        {data.items.length === 0 ? <p className="py-6 text-center text-sm text-ink-600">{t("heatsTable.empty")}</p> : null}
      </div>
      <div className="flex flex-wrap items-center justify-between gap-3 text-sm">
        <p className="text-ink-700" data-testid="heats-count">
          {data.total === 0
            ? t("heatsTable.none")
            : t("heatsTable.shown", { count: data.total, n: count(data.total), from: String(firstRow), to: String(lastRow) })}
        </p>
        <div className="flex flex-wrap items-center gap-2">
          <label className="flex items-center gap-2">
            <span className="text-ink-700">{t("heatsTable.perPage")}</span>
            <select value={pageSize} onChange={(e) => onPage(1, Number(e.target.value))} className="min-h-11 rounded-md border border-ink-300 bg-white px-2">
              {PAGE_SIZES.map((n) => (
                <option key={n} value={n}>
                  {n}
                </option>
              ))}
            </select>
          </label>
          <Button variant="secondary" disabled={page <= 1} onClick={() => onPage(page - 1, pageSize)}>
            {t("heatsTable.previous")}
          </Button>
          <span className="tabular-nums text-ink-700">{t("heatsTable.page", { page: String(page), pages: String(pageCount) })}</span>
          <Button variant="secondary" disabled={page >= pageCount} onClick={() => onPage(page + 1, pageSize)}>
            {t("heatsTable.next")}
          </Button>
        </div>
      </div>
    </div>
  );
}
