import type { SlabDetail } from "@shared/api/heats";
import { faceLabel } from "@/lib/labels";
import { num } from "@/lib/format";

type Defect = SlabDetail["defects"][number];
const BROAD_FACES = ["inner", "outer"] as const;
const SEVERITY_COLOR: Record<number, string> = { 1: "#4b5d6d", 2: "#7a5a10", 3: "#9a3412", 4: "#a61b1b" };

/** The severity shapes of the marks (the same as the labels beside each defect). */
function Marker({ x, y, severity, label }: { x: number; y: number; severity: number; label: number }) {
  const c = SEVERITY_COLOR[severity] ?? SEVERITY_COLOR[1]!;
  const r = 15;
  const shape =
    severity >= 4 ? (
      <path d={`M${x - r * 0.41} ${y - r}h${r * 0.82}l${r * 0.59} ${r * 0.59}v${r * 0.82}l${-r * 0.59} ${r * 0.59}h${-r * 0.82}l${-r * 0.59} ${-r * 0.59}v${-r * 0.82}z`} fill={c} />
    ) : severity === 3 ? (
      <path d={`M${x} ${y - r}L${x + r} ${y + r * 0.8}H${x - r}z`} fill="#fff" stroke={c} strokeWidth={2.2} strokeLinejoin="round" />
    ) : severity === 2 ? (
      <rect x={x - r * 0.8} y={y - r * 0.8} width={r * 1.6} height={r * 1.6} fill={c} />
    ) : (
      <circle cx={x} cy={y} r={r * 0.8} fill="#fff" stroke={c} strokeWidth={2.2} />
    );
  const dark = severity === 2 || severity >= 4;
  return (
    <g>
      {shape}
      <text x={x} y={y + (severity === 3 ? 7 : 5)} textAnchor="middle" fontSize={14} fontWeight={700} fill={dark ? "#fff" : c}>
        {label}
      </text>
    </g>
  );
}

/**
 * Where the defects sit on the slab's broad faces, seen from above, head end on the left. Numbers
 * match the list below; narrow-face and cross-section findings are listed only.
 */
export function SlabMap({ slab }: { slab: SlabDetail }) {
  const numbered = slab.defects.map((d, i) => ({ d, n: i + 1 }));
  const faces = BROAD_FACES.filter((f) => numbered.some(({ d }) => d.face === f && d.positionAlongMm !== null));
  if (faces.length === 0) return null;
  const W = 1000;
  const H = Math.max(110, Math.min(260, (W * slab.widthMm) / slab.lengthMm));
  const pad = 18;
  const x = (mm: number) => pad + (Math.min(Math.max(mm, 0), slab.lengthMm) / slab.lengthMm) * (W - 2 * pad);
  const y = (mm: number | null) => pad + ((mm === null ? slab.widthMm / 2 : Math.min(Math.max(mm, 0), slab.widthMm)) / slab.widthMm) * (H - 2 * pad);
  return (
    <div className="space-y-3" data-testid="slab-map">
      {faces.map((face) => (
        <figure key={face} className="space-y-1">
          <figcaption className="flex justify-between text-xs font-semibold text-ink-700">
            <span>◀ head end · {faceLabel(face)}</span>
            <span>tail end, {num(slab.lengthMm)} mm ▶</span>
          </figcaption>
          <svg viewBox={`0 0 ${W} ${H}`} className="h-auto w-full" role="img" aria-label={`Defects on the ${faceLabel(face).toLowerCase()}`}>
            <rect x={pad} y={pad} width={W - 2 * pad} height={H - 2 * pad} rx={4} fill="#f4f6f7" stroke="#677786" strokeWidth={2} />
            {[0.25, 0.5, 0.75].map((f) => (
              <line key={f} x1={x(f * slab.lengthMm)} x2={x(f * slab.lengthMm)} y1={pad} y2={H - pad} stroke="#d6dde2" strokeDasharray="4 4" />
            ))}
            {numbered
              .filter(({ d }) => d.face === face && d.positionAlongMm !== null)
              .map(({ d, n }: { d: Defect; n: number }) => (
                <g key={d.id}>
                  {d.lengthMm ? (
                    <rect
                      x={x(d.positionAlongMm!)}
                      y={y(d.positionAcrossMm) - Math.max(2, ((d.widthMm ?? 20) / slab.widthMm) * (H - 2 * pad)) / 2}
                      width={Math.max(2, x(d.positionAlongMm! + d.lengthMm) - x(d.positionAlongMm!))}
                      height={Math.max(2, ((d.widthMm ?? 20) / slab.widthMm) * (H - 2 * pad))}
                      fill={SEVERITY_COLOR[d.severity] ?? "#4b5d6d"}
                      opacity={0.25}
                    />
                  ) : null}
                  <Marker x={x(d.positionAlongMm!)} y={y(d.positionAcrossMm)} severity={d.severity} label={n} />
                </g>
              ))}
          </svg>
        </figure>
      ))}
      <p className="text-xs text-ink-600">Drawn to scale along the length; across, the full width of {num(slab.widthMm)} mm. Numbers match the list.</p>
    </div>
  );
}
