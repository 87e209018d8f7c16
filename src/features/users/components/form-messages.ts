import { useCallback } from "react";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { formatLocale } from "@/lib/format";

/**
 * The messages of the shared schemas (shared/api: users, tokens, plant, sign-in) and of the common
 * bounds map (src/lib/form-errors.ts) are English, as the server reads them too. The administrator's
 * forms show them in the language of the screen: each known message by its key under
 * `admin:validation`, at display time (so a message already shown follows a change of language).
 * Anything else (a server's refusal put on a field) is shown as it came.
 */
const MESSAGES: Record<string, string> = {
  "Enter a number.": "enterNumber",
  "Fill this in.": "fillIn",
  "Nothing to change.": "nothingToChange",
  "Use at least 10 characters.": "passwordMin",
  "Use at most 128 characters.": "passwordMax",
  "Give the person's name.": "personName",
  "Use at most 120 characters for a name.": "personNameMax",
  "A name cannot hold line breaks, tabs or other control characters.": "personNameControl",
  "This is not an e-mail address.": "notEmail",
  "Give the user at least one role.": "oneRole",
  "A user keeps at least one role.": "keepsOneRole",
  "Give the first password, or send an invitation instead.": "firstPasswordMissing",
  "With an invitation the person chooses their own password: leave the first password out.": "firstPasswordWithInvitation",
  "Type the password you signed in with.": "currentPassword",
  "Choose a password different from the one you have now.": "samePassword",
  "Use letters, digits, - and _ only.": "codeChars",
  "Use letters, digits and - _ . / only.": "gradeCodeChars",
  "A token may send heats, slabs, process-samples or products.": "tokenScope",
  "Name the system that will use the token.": "tokenName",
  "Tick at least one kind of data the token may send.": "tokenScopes",
  "Give the group's name as the identity provider sends it.": "groupName",
  "A group name is at most 256 characters.": "groupNameMax",
  "At most 200 groups can be mapped.": "groupsMax",
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
