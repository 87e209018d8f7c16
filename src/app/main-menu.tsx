import { useCallback, useEffect, useId, useLayoutEffect, useRef, useState } from "react";
import { NavLink, useLocation } from "react-router";
import { useTranslation } from "react-i18next";
import type { Role } from "@shared/roles";
import { homeFor, type NavItem } from "@/config/nav";

/**
 * The menu's named groups, in their order. A long menu (the administrator's has every screen) is
 * shown by group when it does not fit on one row: each group opens as a list under its name. Screens
 * that belong to no group here are shown on their own.
 */
export const MENU_GROUPS: { id: string; label: string; paths: string[] }[] = [
  { id: "yard-quality", label: "Yard and quality", paths: ["/yard", "/quality", "/quality/review", "/quality/catalogue"] },
  { id: "process-causes", label: "Process and causes", paths: ["/process", "/heats", "/operating-windows", "/risk-models", "/investigations", "/causes"] },
  { id: "claims", label: "Claims and tracing", paths: ["/claims", "/trace"] },
  { id: "reports", label: "Reports", paths: ["/reports"] },
  // The plant's own data and the installation: who signs in, what machines may send, what mail left.
  { id: "setup", label: "Setup", paths: ["/setup", "/import", "/admin/users", "/admin/sign-in", "/admin/tokens", "/admin/outbox"] },
];

/** An entry of the row: a screen, or a group of screens that opens as a list. */
type Entry = { kind: "link"; item: NavItem } | { kind: "group"; id: string; label: string; items: NavItem[] };

/**
 * The three ways the row can be laid out, tried in this order until one fits: every screen; the
 * person's own group of screens (the one holding their home) on the row and the others by group;
 * every group by name.
 */
const LAYOUTS = ["flat", "own-group-open", "grouped"] as const;
type Layout = (typeof LAYOUTS)[number];

function entriesFor(items: NavItem[], roles: Role[], layout: Layout, groupLabel: (id: string) => string): Entry[] {
  if (layout === "flat") return items.map((item) => ({ kind: "link", item }));
  const home = homeFor(roles);
  const grouped: Entry[] = [];
  const own: Entry[] = [];
  for (const g of MENU_GROUPS) {
    const mine = items.filter((i) => g.paths.includes(i.to));
    if (mine.length === 0) continue;
    const isOwn = layout === "own-group-open" && g.paths.includes(home);
    if (mine.length === 1 || isOwn) (isOwn ? own : grouped).push(...mine.map((item) => ({ kind: "link" as const, item })));
    else grouped.push({ kind: "group", id: g.id, label: groupLabel(g.id), items: mine });
  }
  const ungrouped = items.filter((i) => !MENU_GROUPS.some((g) => g.paths.includes(i.to))).map((item) => ({ kind: "link" as const, item }));
  return [...own, ...grouped, ...ungrouped];
}

/** Whether the screen at `pathname` is this item's (the same rule as its NavLink). */
function isCurrent(item: NavItem, items: NavItem[], pathname: string) {
  const end = items.some((o) => o.to.startsWith(item.to + "/"));
  return pathname === item.to || (!end && pathname.startsWith(item.to + "/"));
}

/** Room either side of a name: the usual; packed (a flat menu of many screens); by group. */
type Pad = "usual" | "packed" | "grouped";
const PADS: Record<Pad, string> = { usual: "px-3", packed: "px-1.5", grouped: "px-2.5" };
const padOf = (layout: Layout, many: boolean): Pad => (layout !== "flat" ? "grouped" : many ? "packed" : "usual");
const gapOf = (pad: Pad) => (pad === "usual" ? "gap-1" : "gap-0.5");

const entryClass = (pad: Pad, active: boolean) =>
  `flex min-h-12 items-center whitespace-nowrap rounded-md ${PADS[pad]} text-sm font-semibold ${
    active ? "bg-strand-700 text-white" : "text-ink-200 hover:bg-ink-800 hover:text-white"
  }`;

function Chevron({ open }: { open: boolean }) {
  return (
    <svg viewBox="0 0 12 12" className={`ml-1.5 h-3 w-3 shrink-0 ${open ? "rotate-180" : ""}`} aria-hidden>
      <path d="M2 4.5 6 8.5 10 4.5" fill="none" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" strokeLinejoin="round" />
    </svg>
  );
}

function MenuGroup({
  entry,
  allItems,
  open,
  onToggle,
  buttonRef,
}: {
  entry: Extract<Entry, { kind: "group" }>;
  allItems: NavItem[];
  open: boolean;
  onToggle: () => void;
  buttonRef: (el: HTMLButtonElement | null) => void;
}) {
  const { t } = useTranslation();
  const listId = useId();
  const { pathname } = useLocation();
  const here = entry.items.some((i) => isCurrent(i, allItems, pathname));
  const own = useRef<HTMLButtonElement | null>(null);
  // Near the right edge (a tablet held upright) the list opens leftwards, so it stays on the screen.
  const [alignRight, setAlignRight] = useState(false);
  return (
    <div className="relative" data-menu-group={entry.id}>
      <button
        ref={(el) => {
          own.current = el;
          buttonRef(el);
        }}
        type="button"
        aria-expanded={open}
        aria-controls={listId}
        onClick={() => {
          const r = own.current?.getBoundingClientRect();
          if (r) setAlignRight(r.left + 256 > window.innerWidth);
          onToggle();
        }}
        className={`${entryClass("grouped", here)} ${open && !here ? "bg-ink-800 text-white" : ""}`}
      >
        {entry.label}
        {here ? <span className="sr-only"> ({t("nav.currentGroup")})</span> : null}
        <Chevron open={open} />
      </button>
      <ul
        id={listId}
        hidden={!open}
        aria-label={entry.label}
        className={`absolute top-full z-40 mt-1 min-w-60 space-y-0.5 rounded-md border border-ink-700 bg-ink-900 p-1.5 shadow-lg ${alignRight ? "right-0" : "left-0"}`}
      >
        {entry.items.map((i) => (
          <li key={i.to}>
            <NavLink to={i.to} end={allItems.some((o) => o.to.startsWith(i.to + "/"))} className={({ isActive }) => entryClass("usual", isActive)}>
              {i.label}
            </NavLink>
          </li>
        ))}
      </ul>
    </div>
  );
}

/** The row as it would be drawn in a layout, without links or handlers: only to measure its width. */
function MeasureRow({ entries, pad, rowRef }: { entries: Entry[]; pad: Pad; rowRef: (el: HTMLDivElement | null) => void }) {
  return (
    <div ref={rowRef} className={`flex w-max ${gapOf(pad)}`}>
      {entries.map((e) =>
        e.kind === "link" ? (
          <span key={e.item.to} className={entryClass(pad, false)}>
            {e.item.label}
          </span>
        ) : (
          <span key={e.id} className={entryClass("grouped", false)}>
            {e.label}
            <Chevron open={false} />
          </span>
        ),
      )}
    </div>
  );
}

/**
 * The main navigation (`className` places it in the header). Every screen on one row when they fit; otherwise by named group (a button
 * with aria-expanded and the list it opens). An open list closes on Escape (focus goes back to its
 * button), on a click or tap outside, when focus leaves it, and when a screen is opened.
 */
export function MainMenu({ items, roles, className }: { items: NavItem[]; roles: Role[]; className: string }) {
  const { t } = useTranslation();
  const groupLabel = (id: string) => t(`nav.groups.${id}`);
  const navRef = useRef<HTMLElement>(null);
  const rows = useRef<Partial<Record<Layout, HTMLDivElement | null>>>({});
  const buttons = useRef<Record<string, HTMLButtonElement | null>>({});
  const [layout, setLayout] = useState<Layout>("flat");
  const [openId, setOpenId] = useState<string | null>(null);
  const location = useLocation();
  // A flat menu of many screens packs tighter, as it always has.
  const many = items.length > 12;
  const pad = padOf(layout, many);

  // Pick the first layout whose row fits the width the menu has; again whenever that width changes,
  // or a row's own (the font arriving after the first paint, say).
  // The labels too: another language gives the row another width.
  const menuKey = `${items.map((i) => `${i.to}=${i.label}`).join(" ")}|${roles.join(",")}`;
  useLayoutEffect(() => {
    const nav = navRef.current;
    if (!nav) return;
    const choose = () => {
      const width = nav.clientWidth;
      const fits = LAYOUTS.find((l) => Math.ceil(rows.current[l]?.getBoundingClientRect().width ?? Infinity) <= width);
      setLayout(fits ?? "grouped");
    };
    choose();
    const observer = new ResizeObserver(choose);
    observer.observe(nav);
    for (const l of LAYOUTS) if (rows.current[l]) observer.observe(rows.current[l]!);
    return () => observer.disconnect();
  }, [menuKey]);

  // A screen opened (from the menu or anywhere else): no list stays open over it.
  useEffect(() => setOpenId(null), [location.pathname, location.search, layout]);

  const close = useCallback((focusButton: boolean) => {
    setOpenId((id) => {
      if (id && focusButton) buttons.current[id]?.focus();
      return null;
    });
  }, []);

  useEffect(() => {
    if (!openId) return;
    const onKey = (e: KeyboardEvent) => {
      if (e.key === "Escape") close(true);
    };
    const onPointer = (e: PointerEvent) => {
      const group = navRef.current?.querySelector(`[data-menu-group="${openId}"]`);
      if (group && !group.contains(e.target as Node)) close(false);
    };
    document.addEventListener("keydown", onKey);
    document.addEventListener("pointerdown", onPointer);
    return () => {
      document.removeEventListener("keydown", onKey);
      document.removeEventListener("pointerdown", onPointer);
    };
  }, [openId, close]);

  const entries = entriesFor(items, roles, layout, groupLabel);
  return (
    <nav
      ref={navRef}
      aria-label={t("nav.main")}
      data-layout={layout}
      className={`relative flex flex-wrap ${gapOf(pad)} ${className}`}
      onBlur={(e) => {
        // Focus moved out of the open list and its button (Tab past the last screen, say): it closes.
        const group = openId ? e.currentTarget.querySelector(`[data-menu-group="${openId}"]`) : null;
        if (group && e.relatedTarget && !group.contains(e.relatedTarget as Node)) close(false);
      }}
    >
      {entries.map((e) =>
        e.kind === "link" ? (
          <NavLink
            key={e.item.to}
            to={e.item.to}
            end={items.some((o) => o.to.startsWith(e.item.to + "/"))}
            className={({ isActive }) => entryClass(pad, isActive)}
          >
            {e.item.label}
          </NavLink>
        ) : (
          <MenuGroup
            key={e.id}
            entry={e}
            allItems={items}
            open={openId === e.id}
            onToggle={() => setOpenId((id) => (id === e.id ? null : e.id))}
            buttonRef={(el) => {
              buttons.current[e.id] = el;
            }}
          />
        ),
      )}
      {/* The rows of every layout, invisible and out of the flow, measured to choose the one that fits. */}
      <div aria-hidden className="pointer-events-none invisible absolute left-0 top-0 h-0 w-0 overflow-hidden">
        {LAYOUTS.map((l) => (
          <MeasureRow
            key={l}
            entries={entriesFor(items, roles, l, groupLabel)}
            pad={padOf(l, many)}
            rowRef={(el) => {
              rows.current[l] = el;
            }}
          />
        ))}
      </div>
    </nav>
  );
}
