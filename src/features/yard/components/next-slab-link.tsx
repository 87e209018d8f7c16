import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import type { NextSlab } from "../yard-set";

const big = "flex min-h-14 flex-col justify-center rounded-md px-5 py-1 text-left";

/**
 * "Next slab: L260071-103" and, under it, why that one (the next piece, or the next slab waiting for
 * its inspection). Without one, the way back to the search.
 */
export function NextSlabLink({ next, tone = "primary" }: { next: NextSlab | null; tone?: "primary" | "outline" }) {
  const { t } = useTranslation("yard");
  const look = tone === "primary" ? "bg-strand-700 text-white hover:bg-strand-800" : "border-2 border-ink-900 bg-white text-ink-900 hover:bg-ink-50";
  if (!next) {
    return (
      <Link to="/yard" className={`${big} ${look}`} data-testid="next-slab" data-next-kind="none">
        <span className="text-base font-semibold">{t("nextSlab.findOne")}</span>
        <span className={`text-xs ${tone === "primary" ? "text-strand-100" : "text-ink-700"}`}>{t("nextSlab.noneWaiting")}</span>
      </Link>
    );
  }
  return (
    <Link
      to={`/yard/slabs/${encodeURIComponent(next.slabId)}`}
      className={`${big} ${look}`}
      data-testid="next-slab"
      data-next-kind={next.kind}
      data-next-slab={next.slabId}
      aria-label={t("nextSlab.label", { slabId: next.slabId, why: next.why })}
    >
      <span className="text-base font-semibold">{t("nextSlab.button", { slabId: next.slabId })}</span>
      <span className={`text-xs ${tone === "primary" ? "text-strand-100" : "text-ink-700"}`}>{next.why}</span>
    </Link>
  );
}
