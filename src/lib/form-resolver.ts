/**
 * zodResolver for react-hook-form, with the messages the shared schemas carry (shared/api) shown in
 * the person's language (catalogue `schema`, fetched with the first form error). The English text is
 * the key, so an English screen shows exactly what the schema says.
 */
import { zodResolver as resolverOf } from "@hookform/resolvers/zod";
import type { FieldErrors, FieldValues } from "react-hook-form";
import { schemaMessage, type Translate } from "@shared/i18n/schema-messages";
import { i18n } from "@/i18n";

function translateAll(errors: FieldErrors<FieldValues>, t: Translate) {
  for (const [key, value] of Object.entries(errors)) {
    if (key === "ref" || !value || typeof value !== "object") continue;
    const e = value as { message?: unknown };
    if (typeof e.message === "string") e.message = schemaMessage(t, e.message);
    translateAll(value as FieldErrors<FieldValues>, t);
  }
}

export const zodResolver = ((...args: Parameters<typeof resolverOf>) => {
  const resolve = resolverOf(...args);
  return async (...call: Parameters<typeof resolve>) => {
    const result = await resolve(...call);
    if (Object.keys(result.errors).length > 0) {
      await i18n.loadNamespaces("schema");
      translateAll(result.errors, i18n.t.bind(i18n) as unknown as Translate);
    }
    return result;
  };
}) as typeof resolverOf;
