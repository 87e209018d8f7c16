import type { CauseConfidence } from "@shared/domain";
import { CauseChips } from "@/features/causes/components/cause-marks";
import type { RenderCauses } from "@/features/claims/components/history-sections";

/** The causes feature's chips, handed to the claims feature's history pieces (features do not import each other). */
export const causeChips: RenderCauses = (causes) => <CauseChips causes={causes.map((c) => ({ ...c, confidence: c.confidence as CauseConfidence }))} />;
