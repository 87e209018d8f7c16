/**
 * The messages written into the shared schemas (shared/api: "Give the slab id.", "Use a positive
 * number."), which both a form on the client and a refusal of the server show. The English text is
 * the key in the catalogue `schema` (keys of plain sentences, so no key or namespace separators);
 * a message the catalogue lacks (one made with values) is shown as written.
 */
export type Translate = (key: string, options: { ns: "schema"; keySeparator: false; nsSeparator: false; defaultValue: string }) => string;

export const schemaMessage = (t: Translate, message: string): string =>
  t(message, { ns: "schema", keySeparator: false, nsSeparator: false, defaultValue: message });
