import type { z } from "zod";
import { i18n } from "@/i18n";
import { count } from "./format";

const t = (key: string, values?: Record<string, unknown>) => i18n.t(`common:form.${key}`, values);

/**
 * Plain messages for the shared schemas' bounds and types, used by every form (passed to zodResolver
 * as the parse's error map), in the language shown when the form is checked. A message written into
 * a schema itself still wins.
 */
export const friendlyErrors = {
  error: (issue: z.core.$ZodRawIssue): string | undefined => {
    // A whole number as written in the schema ("5000"), a fraction in the person's locale ("0,5").
    const n = (v: unknown) => (typeof v === "number" && !Number.isInteger(v) ? count(v) : String(v));
    switch (issue.code) {
      case "invalid_type":
        if (issue.expected === "number") return t("number");
        if (issue.expected === "int") return t("wholeNumber");
        if (issue.expected === "string") return t("fillIn");
        return undefined;
      case "too_small":
        if (issue.origin === "number") return t("atLeast", { n: n(issue.minimum) });
        if (issue.origin === "string") return Number(issue.minimum) <= 1 ? t("fillIn") : t("atLeastChars", { n: n(issue.minimum) });
        if (issue.origin === "array") return t("atLeastEntries", { n: n(issue.minimum) });
        return undefined;
      case "too_big":
        if (issue.origin === "number") return t("atMost", { n: n(issue.maximum) });
        if (issue.origin === "string") return t("atMostChars", { n: n(issue.maximum) });
        if (issue.origin === "array") return t("atMostEntries", { n: n(issue.maximum) });
        return undefined;
      default:
        return undefined;
    }
  },
};
