import { useCallback } from "react";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { formatLocale } from "@/lib/format";

/**
 * The administrator's forms' own messages (the few written here, not in a shared schema) and the
 * common bounds map's (src/lib/form-errors.ts) in the language of the screen: each by its key under
 * `admin:validation`, at display time. The shared schemas' messages arrive translated already
 * (src/lib/form-resolver.ts reads the `schema` catalogue), and a server's refusal put on a field in
 * the asker's language: both are shown as they came.
 */
const MESSAGES: Record<string, string> = {
  "Enter a number.": "enterNumber",
  "Fill this in.": "fillIn",
  "The two passwords differ. Type the same one twice.": "passwordsDiffer",
  "Enter your e-mail address.": "enterEmail",
  "Check the mapping.": "checkMapping",
};

const NUMBER = "(-?\\d+(?:\\.\\d+)?(?:e[-+]?\\d+)?)";
const BOUNDS: [RegExp, string][] = [
  [new RegExp(`^At least ${NUMBER}\\.$`), "atLeast"],
  [new RegExp(`^At most ${NUMBER}\\.$`), "atMost"],
  [new RegExp(`^At least ${NUMBER} characters\\.$`), "atLeastChars"],
  [new RegExp(`^At most ${NUMBER} characters\\.$`), "atMostChars"],
  [new RegExp(`^At least ${NUMBER} entries\\.$`), "atLeastEntries"],
  [new RegExp(`^At most ${NUMBER} entries\\.$`), "atMostEntries"],
];

/**
 * A number as typed or stored, in the language's way (German decimal comma), every digit kept and
 * without grouping: 0.01 → "0,01", 100000 stays "100000". For bounds, a radius, calibration points.
 */
export const plainNumber = (n: number) => new Intl.NumberFormat(formatLocale(), { useGrouping: false, maximumFractionDigits: 20 }).format(n);
const bound = (s: string) => plainNumber(Number(s));

/** A form's message in the language shown (`t` of any namespace: the keys name `admin:` themselves). */
export function formMessage(t: TFunction, message: string | undefined): string | undefined {
  if (!message) return message;
  const key = MESSAGES[message];
  if (key) return t(`admin:validation.${key}`);
  for (const [re, k] of BOUNDS) {
    const m = re.exec(message);
    if (m) return t(`admin:validation.${k}`, { n: bound(m[1]!) });
  }
  return message;
}

/** The same as a hook: `const message = useFormMessage(); … error={message(errors.name?.message)}`. */
export function useFormMessage(): (message: string | undefined) => string | undefined {
  const { t } = useTranslation("admin");
  return useCallback((message: string | undefined) => formMessage(t, message), [t]);
}
