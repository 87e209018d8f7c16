import type { YardProduct, YardSlab } from "@shared/api/yard";
import { i18n } from "@/i18n";
import { dateTime } from "@/lib/format";

/** The slabs whose id or heat number starts with what was typed, exact id first; at most `limit`. */
export function searchYard(slabs: readonly YardSlab[], typed: string, limit = 10): YardSlab[] {
  const q = typed.trim().toUpperCase();
  if (!q) return [];
  const hits = slabs.filter((s) => s.slabId.startsWith(q) || s.heatNo.startsWith(q));
  hits.sort((a, b) => Number(b.slabId === q) - Number(a.slabId === q) || (a.slabId < b.slabId ? -1 : a.slabId > b.slabId ? 1 : 0));
  return hits.slice(0, limit);
}

export function findInYard(slabs: readonly YardSlab[] | undefined, slabId: string): YardSlab | null {
  const id = slabId.trim().toUpperCase();
  return slabs?.find((s) => s.slabId === id) ?? null;
}

export interface NextSlab {
  slabId: string;
  /** "piece": the next piece of the same heat and strand; "uninspected": the next slab waiting for its inspection. */
  kind: "piece" | "uninspected";
  /** In words, for the button's line under it. */
  why: string;
}

type Current = Pick<YardSlab, "slabId" | "heatNo" | "strandNo" | "pieceNo"> & { castAt: string | null; nextPieceId?: string | null };

const castMs = (s: { castAt: string | null }) => (s.castAt ? Date.parse(s.castAt) : Number.NaN);

/**
 * Where "Next slab" goes: the next piece of the same heat on the same strand; after the last piece,
 * the first slab cast after it on the same strand that still waits for its inspection, else the one
 * that has waited longest on any strand. `done` holds slabs this tablet has entries for (they count
 * as inspected although the set does not know yet).
 */
export function nextSlab(slabs: readonly YardSlab[], current: Current, done: ReadonlySet<string> = new Set()): NextSlab | null {
  const nextPiece =
    current.nextPieceId ??
    slabs.filter((s) => s.heatNo === current.heatNo && s.strandNo === current.strandNo && s.pieceNo > current.pieceNo).sort((a, b) => a.pieceNo - b.pieceNo)[0]
      ?.slabId ??
    null;
  if (nextPiece) {
    return {
      slabId: nextPiece,
      kind: "piece",
      why: i18n.t("yard:nextSlab.piece", { piece: current.pieceNo + 1, heat: current.heatNo, strand: current.strandNo }),
    };
  }
  const waiting = slabs.filter((s) => s.uninspected && !done.has(s.slabId) && s.slabId !== current.slabId);
  const after = castMs(current);
  const sameStrand = waiting
    .filter((s) => s.strandNo === current.strandNo && (Number.isNaN(after) || castMs(s) > after))
    .sort((a, b) => castMs(a) - castMs(b))[0];
  const pick = sameStrand ?? [...waiting].sort((a, b) => castMs(a) - castMs(b))[0];
  if (!pick) return null;
  const words = { heat: current.heatNo, strand: current.strandNo, nextHeat: pick.heatNo, nextStrand: pick.strandNo };
  return {
    slabId: pick.slabId,
    kind: "uninspected",
    why: pick.strandNo === current.strandNo ? i18n.t("yard:nextSlab.lastPieceSameStrand", words) : i18n.t("yard:nextSlab.lastPieceOtherStrand", words),
  };
}

/** The slabs still waiting for their inspection, longest waiting first. */
export function waitingInYard(slabs: readonly YardSlab[], done: ReadonlySet<string> = new Set()): YardSlab[] {
  return slabs.filter((s) => s.uninspected && !done.has(s.slabId)).sort((a, b) => castMs(a) - castMs(b));
}

/**
 * The size to draw a slab the tablet knows nothing about: the largest on the tablet (so any real
 * position fits); without a set, a size no slab of the demo plant exceeds. The server checks the
 * position against the real slab when the entry arrives.
 */
export function sizeForUnknown(slabs: readonly YardSlab[] | undefined) {
  if (!slabs?.length) return { lengthMm: 12_000, widthMm: 2_100, thicknessMm: 250 };
  return {
    lengthMm: Math.max(...slabs.map((s) => s.lengthMm)),
    widthMm: Math.max(...slabs.map((s) => s.widthMm)),
    thicknessMm: Math.max(...slabs.map((s) => s.thicknessMm)),
  };
}

/**
 * "This slab was rolled on 1 Dec 2026, 02:14 into coil K26000331." (several: "into coils K…, K…"),
 * in the language shown.
 */
export function rolledWords(products: readonly YardProduct[]): string {
  const first =
    products
      .map((p) => p.rolledAt)
      .filter(Boolean)
      .sort()[0] ?? null;
  const kinds = new Set(products.map((p) => p.kind));
  const noun = kinds.size === 1 ? ([...kinds][0] === "plate" ? "plate" : "coil") : "coilOrPlate";
  const ids = products.map((p) => p.productId).join(", ");
  const key = `yard:rolled.${first ? "on" : "undated"}.${noun}`;
  return i18n.t(key, { count: products.length, ids, when: first ? dateTime(first) : "" });
}
