import { localeOf, type Language } from "@shared/i18n/languages";
import enCommon from "@shared/i18n/locales/en/common.json";
import enServer from "@shared/i18n/locales/en/server.json";
import { fillText, pluralText, type Tree } from "./catalogue-text";

type Translate = (key: string, values?: Record<string, unknown>) => string;

/**
 * How an error's words are said in a language: the catalogues' translator, which server/lib/i18n.ts
 * installs when it loads (the main thread, where refusals are answered). A thread that never loads
 * it (the import and reader threads, which only hand their refusals on) writes the English from the
 * English catalogues alone, without i18next and the other languages' catalogues in its memory:
 * `{{value}}` put in, `_one`/`_other` chosen by `count` as English does (tests/server/server-language
 * compares it with i18next's English for every key).
 */
let installed: ((language: Language | null | undefined) => Translate) | null = null;

export function installTranslator(translatorOf: (language: Language | null | undefined) => Translate) {
  installed = translatorOf;
}

/** English from the English catalogues, for a thread without the translator (see above). */
export const englishOf: Translate = (key, values = {}) => {
  const [ns, path] = key.includes(":") ? (key.split(":", 2) as [string, string]) : ["common", key];
  const tree = (ns === "server" ? enServer : enCommon) as Tree;
  return fillText(pluralText(tree, path, values.count) ?? key, values);
};

/**
 * Values put into a catalogue text: names and numbers as they are; `{ terms }`: catalogue keys (with
 * their namespace, e.g. "common:roles.quality") said in the reader's language and joined by ", ";
 * `{ num }` (made by `figure`): a quantity written as the reader's language writes numbers (200,000 ·
 * 200.000; 0.5 · 0,5). A bare number is put in as it is (a count choosing the plural, an id).
 */
export type SaidValues = Record<string, string | number | { terms: string[] } | Figure>;

/** A quantity inside a refusal: grouped in thousands unless `group: false`, `digits` fixed decimals, else all it has. */
export interface Figure {
  num: number;
  digits?: number;
  group?: boolean;
}
export const figure = (num: number, opts: { digits?: number; group?: boolean } = {}): Figure => ({ num, ...opts });

const figureFormats = new Map<string, Intl.NumberFormat>();
/** A figure as a language writes it: German with the decimal comma and the point between thousands; English (and the pseudo-locale) as British English. */
export function writeFigure(f: Figure, language: Language | null | undefined): string {
  const locale = localeOf(language);
  const key = `${locale}:${f.digits}:${f.group !== false}`;
  let fmt = figureFormats.get(key);
  if (!fmt) {
    fmt = new Intl.NumberFormat(locale, { useGrouping: f.group !== false, minimumFractionDigits: f.digits ?? 0, maximumFractionDigits: f.digits ?? 20 });
    figureFormats.set(key, fmt);
  }
  return fmt.format(f.num);
}

/** The values of a Said ready for a translator in a language: terms said, figures written. */
export function valuesIn(values: SaidValues | undefined, language: Language | null | undefined, t: Translate = englishOf): Record<string, string | number> {
  return Object.fromEntries(
    Object.entries(values ?? {}).map(([k, v]) => [
      k,
      typeof v !== "object" ? v : "terms" in v ? v.terms.map((key) => t(key)).join(", ") : writeFigure(v, language),
    ]),
  );
}

/**
 * What an error says, as a key of the `server` catalogue (under `errors.`) and its values, so the
 * error handler can answer in the requester's language. The English text (`message`) is the
 * catalogue's English, made once when the error is made.
 */
export interface Said {
  key: string;
  values?: SaidValues;
}

/** Builds a Said: `said("notFound.heat", { heat })` reads `server:errors.notFound.heat`. */
export const said = (key: string, values?: SaidValues): Said => (values ? { key, values } : { key });

/** A Said in one language (English where none is given). */
export function sayIn(s: Said, language: Language | null | undefined): string {
  const t = installed ? installed(language) : englishOf;
  return t(`server:errors.${s.key}`, valuesIn(s.values, language, t));
}

/** An error's words: plain English (not in the catalogue yet), a Said, or Saids said one after the other. */
export type Words = string | Said | Said[];

const sayAllIn = (saids: Said[], language: Language | null | undefined) => saids.map((s) => sayIn(s, language)).join(" ");

/**
 * The one error type services throw; the error middleware turns it into `{ error: { code, message, details } }`.
 * `message` may be plain English (not translated yet) or Saids: then `message` is their English and
 * `said` is kept for the handler to answer in the requester's language.
 */
export class HttpError extends Error {
  public readonly said?: Said[];
  constructor(
    public readonly status: number,
    public readonly code: string,
    message: Words,
    public readonly details?: unknown,
  ) {
    const saids = typeof message === "string" ? null : Array.isArray(message) ? message : [message];
    super(saids ? sayAllIn(saids, "en") : (message as string));
    this.name = "HttpError";
    if (saids) this.said = saids;
  }

  /** The message in a language: the catalogue's text where the error was made with Saids, else its English. */
  messageIn(language: Language | null | undefined): string {
    return this.said ? sayAllIn(this.said, language) : this.message;
  }
}

export const badRequest = (message: Words, details?: unknown, code = "bad_request") => new HttpError(400, code, message, details);
export const notFound = (message: Words, details?: unknown) => new HttpError(404, "not_found", message, details);
export const conflict = (message: Words, details?: unknown) => new HttpError(409, "conflict", message, details);
export const forbidden = (message: Words) => new HttpError(403, "forbidden", message);
