/**
 * The pseudo-locale (en-XA) made from the English catalogue: letters swapped for accented look-alikes,
 * each text lengthened by about a third (German runs 30–40 % longer than English; common practice in
 * localisation testing) and bracketed ⟦ … ⟧, so an untranslated text shows up as plain English and a
 * cut-off one loses its closing bracket. Placeholders ({{count}}), nesting ($t(…)) and the numbered
 * tags of <Trans> (<1>…</1>) are kept as they are.
 *
 * Written here because no well-kept package makes pseudo-locales from an i18next catalogue at run time.
 */
// prettier-ignore
const ACCENTED: Record<string, string> = {
  a: "ȧ", b: "ƀ", c: "ƈ", d: "ḓ", e: "ḗ", f: "ƒ", g: "ɠ", h: "ħ", i: "ī", j: "ĵ", k: "ķ", l: "ŀ", m: "ḿ",
  n: "ƞ", o: "ǿ", p: "ƥ", q: "ɋ", r: "ř", s: "ş", t: "ŧ", u: "ŭ", v: "ṽ", w: "ẇ", x: "ẋ", y: "ẏ", z: "ẑ",
  A: "Ȧ", B: "Ɓ", C: "Ƈ", D: "Ḓ", E: "Ḗ", F: "Ƒ", G: "Ɠ", H: "Ħ", I: "Ī", J: "Ĵ", K: "Ķ", L: "Ŀ", M: "Ḿ",
  N: "Ƞ", O: "Ǿ", P: "Ƥ", Q: "Ɋ", R: "Ř", S: "Ş", T: "Ŧ", U: "Ŭ", V: "Ṽ", W: "Ẇ", X: "Ẋ", Y: "Ẏ", Z: "Ẑ",
};

/** Placeholders, nested keys and <Trans> tags: kept untouched. */
const KEEP = /(\{\{[^}]*\}\}|\$t\([^)]*\)|<\/?\d+\/?>)/g;

export function pseudoText(text: string): string {
  let letters = 0;
  const out = text
    .split(KEEP)
    .map((part, i) => {
      if (i % 2 === 1) return part;
      return part.replace(/[A-Za-z]/g, (ch) => {
        letters++;
        return ACCENTED[ch] ?? ch;
      });
    })
    .join("");
  const pad = "·".repeat(Math.ceil(letters / 3));
  return `⟦${out}${pad ? ` ${pad}` : ""}⟧`;
}

type Tree = { [key: string]: string | Tree };

export function pseudoCatalogue<T extends Tree>(tree: T): T {
  const out: Tree = {};
  for (const [k, v] of Object.entries(tree)) out[k] = typeof v === "string" ? pseudoText(v) : pseudoCatalogue(v);
  return out as T;
}

/** A text on screen that is pseudo-localised (⟦…⟧), for the untranslated-text walk. */
export const isPseudo = (text: string) => /⟦[^⟧]*⟧/.test(text);
