import type { z } from "zod";

/**
 * Plain messages for the shared schemas' bounds and types, used by every form (passed to zodResolver
 * as the parse's error map). A message written into a schema itself still wins.
 */
export const friendlyErrors = {
  error: (issue: z.core.$ZodRawIssue): string | undefined => {
    switch (issue.code) {
      case "invalid_type":
        if (issue.expected === "number") return "Enter a number.";
        if (issue.expected === "string") return "Fill this in.";
        return undefined;
      case "too_small":
        if (issue.origin === "number") return `At least ${String(issue.minimum)}.`;
        if (issue.origin === "string") return Number(issue.minimum) <= 1 ? "Fill this in." : `At least ${String(issue.minimum)} characters.`;
        if (issue.origin === "array") return `At least ${String(issue.minimum)} entries.`;
        return undefined;
      case "too_big":
        if (issue.origin === "number") return `At most ${String(issue.maximum)}.`;
        if (issue.origin === "string") return `At most ${String(issue.maximum)} characters.`;
        if (issue.origin === "array") return `At most ${String(issue.maximum)} entries.`;
        return undefined;
      case "invalid_format":
        return undefined;
      default:
        return undefined;
    }
  },
};
