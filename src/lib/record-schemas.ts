/*
 * The schemas of records — defects and the catalogue, heats and slabs — that the app's first script
 * reads answers with, as one module loaded with the first answer that needs them (`recordSchema`,
 * ./record-schema.ts), not with that script: building them was a good part of the time it took to
 * run, and a report's first view reads none of them. One chunk (vite.config.ts).
 */
export { catalogueSchema, defectListSchema, defectSchema } from "@shared/api/defects";
export { plantSettingsSchema, slabDetailSchema } from "@shared/api/heats";
