type RecordSchemas = typeof import("./record-schemas");

/**
 * A schema of a record (defects and the catalogue, heats and slabs: ./record-schemas.ts) for `api()`'s
 * `schema`: loaded with the first answer that needs it.
 */
export const recordSchema =
  <K extends keyof RecordSchemas>(key: K) =>
  () =>
    import("./record-schemas").then((m) => m[key]);
