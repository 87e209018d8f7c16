import { useMutation, useQueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { LANGUAGE_NAMES, languageSchema, PICKABLE_LANGUAGES, type Language } from "@shared/i18n/languages";
import { meSchema } from "@shared/api/users";
import { authKeys } from "@/features/auth/api/session";
import { api } from "@/lib/api-client";

/**
 * The person's language, kept on their account (PUT /api/me/language): the screens switch at once
 * (src/i18n follows /api/me), and e-mails and workbooks follow it. The pseudo-locale is offered only
 * to someone already using it (a tester sets it through the API).
 */
export function LanguagePicker({ current }: { current: Language | undefined }) {
  const { t, i18n } = useTranslation();
  const qc = useQueryClient();
  const save = useMutation({
    mutationFn: (language: Language) => api("/me/language", { method: "PUT", body: { language }, schema: meSchema }),
    // The screens switch as the session's answer changes (src/app/provider.tsx follows it); what the
    // server wrote in words (a report's methods and notes, a rule's verdict, the audit trail) is asked
    // for again, in the new language.
    onSuccess: (me) => {
      qc.setQueryData(authKeys.me().queryKey, me);
      void qc.invalidateQueries({ predicate: (q) => q.queryKey[0] !== authKeys.all[0] });
    },
  });
  const shown = (current ?? i18n.language) as Language;
  const choices = current === "en-XA" ? [...PICKABLE_LANGUAGES, "en-XA" as const] : PICKABLE_LANGUAGES;
  return (
    <label className="flex items-center gap-1 text-xs text-ink-300">
      <span className="sr-only">{t("shell.language")}</span>
      <select
        className="min-h-12 rounded-md border border-ink-600 bg-ink-900 px-2 text-sm font-semibold text-white"
        value={choices.includes(shown) ? shown : "en"}
        disabled={save.isPending}
        onChange={(e) => {
          const parsed = languageSchema.safeParse(e.target.value);
          if (parsed.success) save.mutate(parsed.data);
        }}
      >
        {choices.map((l) => (
          <option key={l} value={l} lang={l}>
            {LANGUAGE_NAMES[l]}
          </option>
        ))}
      </select>
    </label>
  );
}
