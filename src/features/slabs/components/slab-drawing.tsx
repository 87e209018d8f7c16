import { useRef, type MouseEvent } from "react";
import { useTranslation } from "react-i18next";
import type { Face } from "@shared/domain";
import { SeverityGlyph } from "@/components/ui/marks";
import { useTerms } from "@/i18n/terms";
import { num } from "@/lib/format";

/*
 * The slab unrolled around its length: left narrow face, inner radius (top) face, right narrow
 * face, outer radius (bottom) face, each strip touching the one it shares a corner with. Drawn to
 * scale along the length, head end on the left; across, each face has its own scale so the narrow
 * faces stay big enough to tap with a glove. The cross-section, seen from the head end, is drawn
 * to scale beside it for internal findings.
 *
 * Across is measured from the left edge on the broad faces and on the cross-section ("left" as
 * seen from the head end with the inner face up), and from the corner with the inner face on the
 * narrow faces.
 */

export interface SlabSize {
  lengthMm: number;
  widthMm: number;
  thicknessMm: number;
}

export interface DrawnMark {
  key: string;
  face: string;
  alongMm: number | null;
  acrossMm: number | null;
  lengthMm?: number | null;
  widthMm?: number | null;
  severity: number;
  label?: string | number;
  /** Not on the server yet: drawn dashed. */
  pending?: boolean;
}

export interface Placement {
  face: Face;
  alongMm: number;
  acrossMm: number;
}

type SurfaceFace = Exclude<Face, "section">;

/** An edge's words, under `drawing.edges`. */
type Edge = "outerCorner" | "innerCorner" | "leftEdge" | "rightEdge";

interface Strip {
  face: SurfaceFace;
  /** Which way across runs in the drawing: from the strip's top edge (1) or its bottom edge (-1). */
  dir: 1 | -1;
  top: number;
  height: number;
  /** The edges, top and bottom. */
  edges: [Edge, Edge];
}

const W = 1000;
const X0 = 58;
const X1 = W - 44;
const RULER = 34;
const NARROW_H = 66;
const BROAD_H = 184;

const STRIPS: Strip[] = (() => {
  const spec: Omit<Strip, "top">[] = [
    { face: "left", dir: -1, height: NARROW_H, edges: ["outerCorner", "innerCorner"] },
    { face: "inner", dir: 1, height: BROAD_H, edges: ["leftEdge", "rightEdge"] },
    { face: "right", dir: 1, height: NARROW_H, edges: ["innerCorner", "outerCorner"] },
    { face: "outer", dir: -1, height: BROAD_H, edges: ["rightEdge", "leftEdge"] },
  ];
  let top = RULER;
  return spec.map((s) => {
    const strip = { ...s, top };
    top += s.height;
    return strip;
  });
})();
const STRIPS_BOTTOM = STRIPS[STRIPS.length - 1]!.top + BROAD_H;
const H = STRIPS_BOTTOM + RULER;

const clamp = (v: number, lo: number, hi: number) => Math.min(hi, Math.max(lo, v));
const round = (v: number, step: number) => Math.round(v / step) * step;

/** How far across a face reaches: the width on the broad faces and the section, the thickness on the narrow ones. */
export function acrossLimitMm(slab: SlabSize, face: Face): number {
  return face === "left" || face === "right" ? slab.thicknessMm : slab.widthMm;
}

function svgPoint(svg: SVGSVGElement, e: MouseEvent): { x: number; y: number } | null {
  const ctm = svg.getScreenCTM();
  if (!ctm) return null;
  const p = new DOMPoint(e.clientX, e.clientY).matrixTransform(ctm.inverse());
  return { x: p.x, y: p.y };
}

function Ruler({ slab, y, below }: { slab: SlabSize; y: number; below: boolean }) {
  const metres = Math.floor(slab.lengthMm / 1000);
  const every = metres > 16 ? 2 : 1;
  const x = (mm: number) => X0 + (mm / slab.lengthMm) * (X1 - X0);
  const ticks = Array.from({ length: metres + 1 }, (_, m) => m).filter((m) => m % every === 0);
  return (
    <g aria-hidden fontSize={17} fill="#334555">
      {ticks.map((m) => (
        <g key={m}>
          <line x1={x(m * 1000)} x2={x(m * 1000)} y1={below ? y : y - 8} y2={below ? y + 8 : y} stroke="#677786" strokeWidth={1.5} />
          {m > 0 ? (
            <text x={x(m * 1000)} y={below ? y + 24 : y - 12} textAnchor="middle">
              {m} m
            </text>
          ) : null}
        </g>
      ))}
    </g>
  );
}

/** The unrolled faces. With `onPlace` a tap places the new defect; without, it only shows the marks. */
export function SlabDrawing({
  slab,
  marks,
  placement,
  extent,
  onPlace,
}: {
  slab: SlabSize;
  marks: DrawnMark[];
  placement?: Placement | null;
  /** The new defect's size, drawn from its position when given. */
  extent?: { lengthMm: number | null; widthMm: number | null } | null;
  onPlace?: (p: Placement) => void;
}) {
  const { t } = useTranslation("slab");
  const { term } = useTerms();
  const ref = useRef<SVGSVGElement>(null);
  const x = (mm: number) => X0 + (clamp(mm, 0, slab.lengthMm) / slab.lengthMm) * (X1 - X0);
  const stripOf = (face: string) => STRIPS.find((s) => s.face === face);
  const y = (s: Strip, acrossMm: number | null) => {
    const limit = acrossLimitMm(slab, s.face);
    const f = acrossMm === null ? 0.5 : clamp(acrossMm, 0, limit) / limit;
    return s.dir === 1 ? s.top + f * s.height : s.top + s.height - f * s.height;
  };
  const acrossPx = (s: Strip, mm: number) => (mm / acrossLimitMm(slab, s.face)) * s.height;

  const onClick = (e: MouseEvent<SVGSVGElement>) => {
    if (!onPlace || !ref.current) return;
    const p = svgPoint(ref.current, e);
    if (!p) return;
    const py = clamp(p.y, STRIPS[0]!.top, STRIPS_BOTTOM - 0.01);
    const s = STRIPS.find((st) => py >= st.top && py < st.top + st.height)!;
    const limit = acrossLimitMm(slab, s.face);
    const f = (py - s.top) / s.height;
    const across = s.dir === 1 ? f * limit : (1 - f) * limit;
    const along = ((clamp(p.x, X0, X1) - X0) / (X1 - X0)) * slab.lengthMm;
    onPlace({
      face: s.face,
      alongMm: clamp(round(along, 10), 0, slab.lengthMm),
      acrossMm: clamp(round(across, limit < 500 ? 5 : 10), 0, limit),
    });
  };

  const placed = placement && placement.face !== "section" ? stripOf(placement.face) : undefined;

  return (
    <div className="space-y-1">
      <svg
        ref={ref}
        viewBox={`0 0 ${W} ${H}`}
        className={`h-auto w-full select-none ${onPlace ? "cursor-crosshair touch-manipulation" : ""}`}
        role={onPlace ? "group" : "img"}
        aria-label={onPlace ? t("drawing.placeLabel") : t("drawing.showLabel")}
        data-testid="slab-drawing"
        onClick={onClick}
      >
        {/* Head end: a dark band with its name, so the drawing cannot be read the wrong way round. */}
        <rect x={0} y={STRIPS[0]!.top} width={X0 - 8} height={STRIPS_BOTTOM - STRIPS[0]!.top} rx={4} fill="#14202b" />
        <text
          x={(X0 - 8) / 2}
          y={(STRIPS[0]!.top + STRIPS_BOTTOM) / 2}
          transform={`rotate(-90 ${(X0 - 8) / 2} ${(STRIPS[0]!.top + STRIPS_BOTTOM) / 2})`}
          textAnchor="middle"
          dominantBaseline="central"
          fill="#fff"
          fontSize={19}
          fontWeight={700}
          letterSpacing={3}
        >
          {t("drawing.headEnd")}
        </text>
        {/* Tail end: a light band, so the two ends never look alike. */}
        <rect x={X1 + 6} y={STRIPS[0]!.top} width={W - X1 - 6} height={STRIPS_BOTTOM - STRIPS[0]!.top} rx={4} fill="#d6dde2" stroke="#8a98a5" />
        <text
          x={(X1 + 6 + W) / 2}
          y={(STRIPS[0]!.top + STRIPS_BOTTOM) / 2}
          transform={`rotate(-90 ${(X1 + 6 + W) / 2} ${(STRIPS[0]!.top + STRIPS_BOTTOM) / 2})`}
          textAnchor="middle"
          dominantBaseline="central"
          fill="#1f2f3d"
          fontSize={17}
          fontWeight={600}
          letterSpacing={2}
        >
          {t("drawing.tail", { length: num(slab.lengthMm) })}
        </text>
        <Ruler slab={slab} y={RULER} below={false} />
        <Ruler slab={slab} y={STRIPS_BOTTOM} below />

        {STRIPS.map((s) => (
          <g key={s.face}>
            <rect
              x={X0}
              y={s.top}
              width={X1 - X0}
              height={s.height}
              fill={placed?.face === s.face ? "#eef8f9" : s.height === NARROW_H ? "#e8ecef" : "#f4f6f7"}
              stroke="#4b5d6d"
              strokeWidth={2}
              data-face-strip={s.face}
            />
            <text x={X0 + 10} y={s.top + (s.height === NARROW_H ? 24 : 27)} fontSize={19} fontWeight={700} fill="#1f2f3d" pointerEvents="none">
              {term("faces", s.face)}
              <tspan fontWeight={400} fill="#4b5d6d">
                {" "}
                {t("drawing.across", { mm: num(acrossLimitMm(slab, s.face)) })}
              </tspan>
            </text>
            <text x={X1 - 8} y={s.top + 18} textAnchor="end" fontSize={15} fill="#4b5d6d" pointerEvents="none">
              {t(`drawing.edges.${s.edges[0]}`)}
            </text>
            <text x={X1 - 8} y={s.top + s.height - 7} textAnchor="end" fontSize={15} fill="#4b5d6d" pointerEvents="none">
              {t(`drawing.edges.${s.edges[1]}`)}
            </text>
          </g>
        ))}
        {/* metre lines, faint, to judge positions by eye */}
        {Array.from({ length: Math.floor(slab.lengthMm / 1000) }, (_, m) => m + 1).map((m) => (
          <line key={m} x1={x(m * 1000)} x2={x(m * 1000)} y1={STRIPS[0]!.top} y2={STRIPS_BOTTOM} stroke="#b5c0c9" strokeDasharray="3 6" pointerEvents="none" />
        ))}

        {marks.map((m) => {
          const s = stripOf(m.face);
          if (!s || m.alongMm === null) return null;
          const cx = x(m.alongMm);
          const cy = y(s, m.acrossMm);
          return (
            <g key={m.key} data-mark={m.key}>
              {m.lengthMm ? (
                <rect
                  x={cx}
                  y={cy - Math.max(3, acrossPx(s, m.widthMm ?? 0)) / 2}
                  width={Math.max(3, x(m.alongMm + m.lengthMm) - cx)}
                  height={Math.max(3, acrossPx(s, m.widthMm ?? 0))}
                  fill="#9a3412"
                  opacity={0.22}
                  pointerEvents="none"
                />
              ) : null}
              <SeverityGlyph x={cx} y={cy} r={19} severity={m.severity} label={m.label} pending={m.pending} />
            </g>
          );
        })}

        {placed && placement ? (
          <g pointerEvents="none" data-testid="placement-mark">
            <line
              x1={x(placement.alongMm)}
              x2={x(placement.alongMm)}
              y1={STRIPS[0]!.top}
              y2={STRIPS_BOTTOM}
              stroke="#0b5d6b"
              strokeWidth={2}
              strokeDasharray="8 5"
            />
            <line
              x1={X0}
              x2={X1}
              y1={y(placed, placement.acrossMm)}
              y2={y(placed, placement.acrossMm)}
              stroke="#0b5d6b"
              strokeWidth={2}
              strokeDasharray="8 5"
            />
            {extent?.lengthMm ? (
              <rect
                x={x(placement.alongMm)}
                y={y(placed, placement.acrossMm) - Math.max(4, acrossPx(placed, extent.widthMm ?? 0)) / 2}
                width={Math.max(4, x(placement.alongMm + extent.lengthMm) - x(placement.alongMm))}
                height={Math.max(4, acrossPx(placed, extent.widthMm ?? 0))}
                fill="#0b5d6b"
                opacity={0.3}
              />
            ) : null}
            <circle cx={x(placement.alongMm)} cy={y(placed, placement.acrossMm)} r={22} fill="none" stroke="#e8b04a" strokeWidth={9} />
            <circle cx={x(placement.alongMm)} cy={y(placed, placement.acrossMm)} r={22} fill="none" stroke="#074450" strokeWidth={3.5} />
            <circle cx={x(placement.alongMm)} cy={y(placed, placement.acrossMm)} r={4} fill="#074450" />
          </g>
        ) : null}
      </svg>
      <p className="text-xs text-ink-600">{t("drawing.scaleNote", { width: num(slab.widthMm), thickness: num(slab.thicknessMm) })}</p>
    </div>
  );
}

/** The cross-section seen from the head end, to scale: a tap places an internal finding across the width. */
export function CrossSection({
  slab,
  marks,
  placement,
  onPlace,
}: {
  slab: SlabSize;
  marks: DrawnMark[];
  placement?: Placement | null;
  onPlace?: (acrossMm: number) => void;
}) {
  const { t } = useTranslation("slab");
  const ref = useRef<SVGSVGElement>(null);
  const VW = 1000;
  const bx = 190;
  const bw = 620;
  const bh = clamp((bw * slab.thicknessMm) / slab.widthMm, 90, 280);
  const by = 40;
  const VH = by + bh + 40;
  const x = (mm: number) => bx + (clamp(mm, 0, slab.widthMm) / slab.widthMm) * bw;
  const onClick = (e: MouseEvent<SVGSVGElement>) => {
    if (!onPlace || !ref.current) return;
    const p = svgPoint(ref.current, e);
    if (!p) return;
    const across = ((clamp(p.x, bx, bx + bw) - bx) / bw) * slab.widthMm;
    onPlace(clamp(round(across, 10), 0, slab.widthMm));
  };
  const here = placement?.face === "section" ? placement : null;
  return (
    <svg
      ref={ref}
      viewBox={`0 0 ${VW} ${VH}`}
      className={`h-auto w-full select-none ${onPlace ? "cursor-crosshair touch-manipulation" : ""}`}
      role={onPlace ? "group" : "img"}
      aria-label={t("drawing.sectionLabel")}
      data-testid="cross-section"
      onClick={onClick}
    >
      <text x={bx + bw / 2} y={by - 12} textAnchor="middle" fontSize={21} fill="#334555">
        {t("drawing.sectionInner")}
      </text>
      <text x={bx + bw / 2} y={by + bh + 30} textAnchor="middle" fontSize={21} fill="#334555">
        {t("drawing.sectionOuter")}
      </text>
      <text x={bx - 14} y={by + bh / 2} textAnchor="end" dominantBaseline="central" fontSize={21} fontWeight={600} fill="#334555">
        {t("drawing.sectionLeft")}
      </text>
      <text x={bx + bw + 14} y={by + bh / 2} dominantBaseline="central" fontSize={21} fill="#334555">
        {t("drawing.sectionRight", { width: num(slab.widthMm) })}
      </text>
      <rect x={bx} y={by} width={bw} height={bh} fill={here ? "#eef8f9" : "#d6dde2"} stroke="#4b5d6d" strokeWidth={2} data-face-strip="section" />
      <line x1={bx} x2={bx + bw} y1={by + bh / 2} y2={by + bh / 2} stroke="#8a98a5" strokeDasharray="6 6" pointerEvents="none" />
      {marks
        .filter((m) => m.face === "section")
        .map((m) => (
          <SeverityGlyph key={m.key} x={x(m.acrossMm ?? slab.widthMm / 2)} y={by + bh / 2} r={19} severity={m.severity} label={m.label} pending={m.pending} />
        ))}
      {here ? (
        <g pointerEvents="none" data-testid="section-placement-mark">
          <line x1={x(here.acrossMm)} x2={x(here.acrossMm)} y1={by} y2={by + bh} stroke="#0b5d6b" strokeWidth={2} strokeDasharray="8 5" />
          <circle cx={x(here.acrossMm)} cy={by + bh / 2} r={22} fill="none" stroke="#e8b04a" strokeWidth={9} />
          <circle cx={x(here.acrossMm)} cy={by + bh / 2} r={22} fill="none" stroke="#074450" strokeWidth={3.5} />
        </g>
      ) : null}
    </svg>
  );
}
