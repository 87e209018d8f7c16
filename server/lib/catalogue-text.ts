/**
 * A text of a catalogue tree put together without i18next, for the threads that hold no translator
 * (http-error.ts `englishOf`, words.ts `textIn`): `_one`/`_other` chosen by `count` as English and
 * German count, `{{value}}` put in. tests/server/server-language and report-words compare both with
 * i18next for every key.
 */
export type Tree = { [key: string]: string | Tree };

/** The string at a dotted path of a tree (undefined where there is none). */
export function findText(tree: Tree, path: string): string | undefined {
  let node: string | Tree | undefined = tree;
  for (const part of path.split(".")) node = typeof node === "object" ? node[part] : undefined;
  return typeof node === "string" ? node : undefined;
}

/** The key's text in a tree, its plural form first when `count` is a number. */
export function pluralText(tree: Tree, key: string, count: unknown): string | undefined {
  return (typeof count === "number" ? findText(tree, `${key}_${count === 1 ? "one" : "other"}`) : undefined) ?? findText(tree, key);
}

/** `{{name}}` put in from the values (a placeholder without a value stays as written). */
export const fillText = (text: string, values: Record<string, unknown>) =>
  text.replace(/\{\{\s*([\w.]+)\s*\}\}/g, (whole, name: string) => (name in values ? String(values[name]) : whole));
