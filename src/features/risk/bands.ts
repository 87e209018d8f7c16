import type { RiskBand } from "@shared/api/risk";

/**
 * The bands in order and their look (a bar at the left, the strength of the tint). Shared by the
 * yard, heats and slabs; apart from risk-band.tsx so that the yard, which shows no risk words of its
 * own, does not fetch the process engineer's catalogue with its screen (tests/client/screen-texts).
 */
export const BAND_RANK: Record<RiskBand, number> = { high: 2, raised: 1, usual: 0 };
export const BAND_STYLE: Record<RiskBand, string> = {
  high: "border-l-8 border-l-ember-700 bg-ember-100",
  raised: "border-l-8 border-l-ember-500 bg-ember-50",
  usual: "border-l-8 border-l-ink-300 bg-white",
};
