import { useMemo } from "react";
import { Link, useNavigate } from "react-router";
import { createColumnHelper, flexRender, getCoreRowModel, useReactTable, type SortingState } from "@tanstack/react-table";
import type { HeatList, HeatListQuery, HeatRow } from "@shared/api/heats";
import { Button } from "@/components/ui/button";
import { date, num, plural, time } from "@/lib/format";
import { PAGE_SIZES } from "./heat-list-params";

type SortKey = HeatListQuery["sort"];
const col = createColumnHelper<HeatRow>();

const columns = [
  col.accessor("heatNo", {
    id: "heatNo",
    header: "Heat",
    cell: (c) => (
      <Link to={`/heats/${encodeURIComponent(c.getValue())}`} className="font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2">
        {c.getValue()}
      </Link>
    ),
  }),
  col.accessor("sequenceNo", {
    id: "sequenceNo",
    header: "Sequence",
    cell: (c) =>
      c.getValue() ? (
        <span className="block leading-tight">
          <span className="whitespace-nowrap">{c.getValue()}</span>
          {c.row.original.sequencePosition ? <span className="block text-xs text-ink-600">heat {c.row.original.sequencePosition}</span> : null}
        </span>
      ) : (
        "—"
      ),
  }),
  col.accessor("gradeCode", {
    id: "gradeCode",
    header: "Grade",
    cell: (c) => (
      <span className="block leading-tight">
        <span className="whitespace-nowrap">{c.getValue()}</span>
        <span className="block text-xs text-ink-600">{c.row.original.familyCode}</span>
      </span>
    ),
  }),
  col.accessor("castStart", {
    id: "castStart",
    header: "Cast start",
    cell: (c) => (
      <span className="block leading-tight">
        <span className="whitespace-nowrap">{date(c.getValue())}</span>
        <span className="block text-xs text-ink-600">{time(c.getValue())}</span>
      </span>
    ),
  }),
  col.accessor("castingSpeedMPerMin", { id: "castingSpeed", header: "Speed m/min", meta: { numeric: true }, cell: (c) => num(c.getValue(), 2) }),
  col.accessor("superheatC", { id: "superheat", header: "Superheat °C", meta: { numeric: true }, cell: (c) => num(c.getValue(), 1) }),
  col.accessor("embrCurrentA", { id: "embrCurrentA", header: "Brake A", enableSorting: false, meta: { numeric: true }, cell: (c) => num(c.getValue(), 0) }),
  col.accessor("senDepthMm", { id: "senDepthMm", header: "SEN mm", enableSorting: false, meta: { numeric: true }, cell: (c) => num(c.getValue(), 0) }),
  col.accessor("slabs", { id: "slabs", header: "Slabs", meta: { numeric: true } }),
  col.accessor("defects", { id: "defects", header: "Defects", meta: { numeric: true } }),
  col.accessor("affectedSlabs", {
    id: "affectedSlabs",
    header: "Affected",
    enableSorting: false,
    meta: { numeric: true },
    cell: (c) => (
      <span className="whitespace-nowrap" title="slabs with at least one defect, of the heat's slabs">
        {c.getValue()} <span className="text-ink-600">of {c.row.original.slabs}</span>
      </span>
    ),
  }),
];

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
                          title={`Sort by ${String(h.column.columnDef.header)}`}
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
        {data.items.length === 0 ? <p className="py-6 text-center text-sm text-ink-600">No heat matches these filters.</p> : null}
      </div>
      <div className="flex flex-wrap items-center justify-between gap-3 text-sm">
        <p className="text-ink-700" data-testid="heats-count">
          {data.total === 0 ? "No heats" : `Heats ${firstRow}–${lastRow} of ${plural(data.total, "heat")}`}
        </p>
        <div className="flex flex-wrap items-center gap-2">
          <label className="flex items-center gap-2">
            <span className="text-ink-700">Per page</span>
            <select value={pageSize} onChange={(e) => onPage(1, Number(e.target.value))} className="min-h-11 rounded-md border border-ink-300 bg-white px-2">
              {PAGE_SIZES.map((n) => (
                <option key={n} value={n}>
                  {n}
                </option>
              ))}
            </select>
          </label>
          <Button variant="secondary" disabled={page <= 1} onClick={() => onPage(page - 1, pageSize)}>
            ← Previous
          </Button>
          <span className="tabular-nums text-ink-700">
            Page {page} of {pageCount}
          </span>
          <Button variant="secondary" disabled={page >= pageCount} onClick={() => onPage(page + 1, pageSize)}>
            Next →
          </Button>
        </div>
      </div>
    </div>
  );
}
