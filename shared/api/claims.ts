import { z } from "zod";
import { CLAIM_STATUSES } from "../domain";

/**
 * Customer claims, the coil/plate → slab → heat trace, and a heat's whole history (the JSON behind
 * the printable view and the heat history workbook).
 */
export const claimStatusSchema = z.enum(CLAIM_STATUSES, { error: "The status is new, under_review, accepted, rejected or closed." });
export const CLAIM_STATUS_LABELS: Record<(typeof CLAIM_STATUSES)[number], string> = {
  new: "New",
  under_review: "Under review",
  accepted: "Accepted",
  rejected: "Rejected",
  closed: "Closed",
};

const productIds = z.array(z.string().trim().min(1).max(40)).max(200);

export const claimCreateSchema = z.object({
  claimNo: z.string().trim().min(2, "Give the claim number.").max(40),
  customer: z.string().trim().min(2, "Name the customer.").max(120),
  productIds: productIds.default([]),
  receivedOn: z.iso.date({ error: "Give the date received as YYYY-MM-DD." }),
  defectComplained: z.string().trim().min(2, "Say what the customer complains of.").max(500),
  quantityT: z.number({ error: "Give the quantity in tonnes." }).min(0).max(100_000).nullable().optional(),
  notes: z.string().trim().max(5000).nullable().optional(),
  /** Link the slabs the products trace to (coil/plate → slab) at once. */
  linkTraced: z.boolean().default(true),
});
export type ClaimCreate = z.input<typeof claimCreateSchema>;

export const claimUpdateSchema = z
  .object({
    customer: z.string().trim().min(2).max(120).optional(),
    productIds: productIds.optional(),
    receivedOn: z.iso.date().optional(),
    defectComplained: z.string().trim().min(2).max(500).optional(),
    quantityT: z.number().min(0).max(100_000).nullable().optional(),
    status: claimStatusSchema.optional(),
    notes: z.string().trim().max(5000).nullable().optional(),
  })
  .refine((v) => Object.keys(v).length > 0, { message: "Nothing to change." });

export const claimLinkSchema = z
  .object({ slabIds: z.array(z.string().trim().min(1).max(40)).max(500).default([]), productIds: productIds.default([]) })
  .refine((v) => v.slabIds.length + v.productIds.length > 0, { message: "Give slab ids or coil / plate ids to link." });

export const claimQuerySchema = z.object({
  status: claimStatusSchema.optional(),
  q: z.string().trim().max(80).optional(),
});

// ---------------------------------------------------------------------------------------------
// The two editions of a heat's history
// ---------------------------------------------------------------------------------------------

/**
 * The parts a heat's history can hold. The internal edition holds them all; the customer edition
 * holds those the claims officer chooses among CUSTOMER_SECTIONS — process samples and the plant's
 * other claims never leave the plant.
 */
export const HISTORY_SECTIONS = [
  "chemistry",
  "conditions",
  "samples",
  "slabs",
  "defects",
  "photos",
  "dispositions",
  "causes",
  "investigations",
  "claims",
  "audit",
] as const;
export type HistorySection = (typeof HISTORY_SECTIONS)[number];
export const CUSTOMER_SECTIONS = [
  "chemistry",
  "conditions",
  "slabs",
  "defects",
  "photos",
  "dispositions",
  "causes",
  "investigations",
  "audit",
] as const satisfies readonly HistorySection[];
export type CustomerSection = (typeof CUSTOMER_SECTIONS)[number];
/** On unless the officer takes them off; causes, investigations and the audit trail are off unless put on. */
export const CUSTOMER_DEFAULT_SECTIONS: CustomerSection[] = ["chemistry", "conditions", "slabs", "defects", "photos", "dispositions"];
export const SECTION_LABELS: Record<HistorySection, string> = {
  chemistry: "Chemistry",
  conditions: "Casting conditions",
  samples: "Process samples",
  slabs: "Slabs",
  defects: "Defects",
  photos: "Defect photos",
  dispositions: "Dispositions",
  causes: "Causes",
  investigations: "Investigations",
  claims: "Other claims",
  audit: "Record of changes",
};
export const HISTORY_EDITIONS = ["internal", "customer"] as const;
export type HistoryEdition = (typeof HISTORY_EDITIONS)[number];
export const EDITION_LABELS: Record<HistoryEdition, string> = { internal: "Internal", customer: "For the customer" };

const editionField = z.enum(HISTORY_EDITIONS, { error: "The edition is internal or customer." });
/** "chemistry,slabs,…" or a list: the customer edition's parts, each known. */
const sectionsField = z
  .union([z.string().max(300), z.array(z.string().max(40)).max(20)])
  .transform((v) => (Array.isArray(v) ? v : v.split(",")).map((x) => x.trim()).filter(Boolean))
  .pipe(z.array(z.enum(CUSTOMER_SECTIONS, { error: `A part of the customer edition is one of: ${CUSTOMER_SECTIONS.join(", ")}.` })));

/** GET /heats/:heatNo/history(.xlsx)?edition=&sections=&claim= */
export const historyEditionQuerySchema = z.object({
  edition: editionField.default("internal"),
  /** The customer edition's parts (default CUSTOMER_DEFAULT_SECTIONS); the internal edition holds all. */
  sections: sectionsField.optional(),
  /** The claim the history is prepared for: it gives the cover page. */
  claim: z.coerce.number().int().positive().optional(),
});
export type HistoryEditionQuery = z.input<typeof historyEditionQuerySchema>;

export const sendHistorySchema = z.object({
  heatNo: z.string().trim().min(1).max(40),
  to: z
    .array(z.email({ error: "This is not an e-mail address." }))
    .min(1, "Give at least one recipient.")
    .max(10),
  message: z.string().trim().max(2000).optional(),
  /** The customer edition unless the officer chooses the internal one. */
  edition: editionField.default("customer"),
  sections: sectionsField.optional(),
});

const person = z.object({ id: z.string(), name: z.string() }).nullable();
const attachment = z.object({
  id: z.string(),
  fileName: z.string(),
  mime: z.string(),
  bytes: z.number().int(),
  url: z.string(),
  at: z.string(),
  by: z.string().nullable(),
});

export const claimSummarySchema = z.object({
  id: z.number().int(),
  claimNo: z.string(),
  customer: z.string(),
  productIds: z.array(z.string()),
  receivedOn: z.string(),
  defectComplained: z.string(),
  quantityT: z.number().nullable(),
  status: claimStatusSchema,
  slabs: z.number().int(),
  heats: z.array(z.string()),
});
export type ClaimSummary = z.infer<typeof claimSummarySchema>;

export const claimSchema = claimSummarySchema.extend({
  notes: z.string().nullable(),
  createdBy: person,
  createdAt: z.string(),
  linkedSlabs: z.array(
    z.object({
      slabId: z.string(),
      heatNo: z.string(),
      sequenceNo: z.string().nullable(),
      grade: z.string(),
      disposition: z.string().nullable(),
      defects: z.number().int(),
      linkedVia: z.string(),
      linkedAt: z.string(),
      products: z.array(z.string()),
    }),
  ),
  /** Product ids given that the rolling-mill trace does not know. */
  untracedProducts: z.array(z.string()),
  attachments: z.array(attachment),
  history: z.array(z.object({ at: z.string(), by: z.string().nullable(), action: z.string(), detail: z.string().nullable() })),
});
export type Claim = z.infer<typeof claimSchema>;

// ---------------------------------------------------------------------------------------------
// A heat's history (trace, printable view, workbook)
// ---------------------------------------------------------------------------------------------

const n = z.number().nullable();
const s = z.string().nullable();

export const historyCoverSchema = z.object({
  claimNo: z.string(),
  customer: z.string(),
  receivedOn: z.string(),
  defectComplained: z.string(),
  quantityT: n,
  /** The claim's coils and plates that come from this heat (traced), and those of other heats or untraced. */
  products: z.array(z.string()),
  otherProducts: z.array(z.string()),
  /** The claim's slabs of this heat. */
  slabs: z.array(z.string()),
  preparedBy: z.string(),
});
export type HistoryCover = z.infer<typeof historyCoverSchema>;

export const heatHistorySchema = z.object({
  generatedAt: z.string(),
  edition: z.object({
    kind: z.enum(HISTORY_EDITIONS),
    /** The parts this document holds, in HISTORY_SECTIONS order. */
    sections: z.array(z.enum(HISTORY_SECTIONS)),
    /** With a claim: the cover page (claim number, customer, coils, dates). */
    cover: historyCoverSchema.nullable(),
  }),
  heat: z.object({
    heatNo: z.string(),
    sequenceNo: s,
    sequencePosition: n,
    caster: z.string(),
    grade: z.string(),
    gradeName: z.string(),
    family: z.string(),
    castStart: z.string(),
    castEnd: s,
    ladleWeightT: n,
    conditions: z.array(z.object({ key: z.string(), label: z.string(), unit: z.string(), value: n, source: s })),
    chemistry: z.array(z.object({ key: z.string(), element: z.string(), unit: z.string(), value: n })),
  }),
  slabs: z.array(
    z.object({
      slabId: z.string(),
      strand: z.number().int(),
      pieceNo: z.number().int(),
      lengthMm: z.number(),
      widthMm: z.number(),
      thicknessMm: z.number(),
      weightT: n,
      castAt: s,
      transition: z.boolean(),
      disposition: s,
      defects: z.number().int(),
      conditions: z.array(z.object({ key: z.string(), value: n, source: s })),
      products: z.array(z.string()),
    }),
  ),
  defects: z.array(
    z.object({
      id: z.number().int(),
      slabId: z.string(),
      type: z.string(),
      typeName: z.string(),
      face: z.string(),
      positionAlongMm: n,
      positionAcrossMm: n,
      lengthMm: n,
      widthMm: n,
      depthMm: n,
      severity: z.number().int(),
      stage: z.string(),
      disposition: s,
      reviewStatus: s,
      foundAt: z.string(),
      loggedBy: s,
      note: s,
      causes: z.array(z.string()),
      photos: z.array(z.object({ id: z.string(), url: z.string(), thumbUrl: z.string() })),
    }),
  ),
  causes: z.array(
    z.object({
      defectId: z.number().int(),
      slabId: z.string(),
      tag: z.string(),
      tagName: z.string(),
      confidence: z.string(),
      note: s,
      by: s,
      at: z.string(),
      removedAt: s,
      removedBy: s,
    }),
  ),
  /** Null in the customer edition (the samples stay in the plant). */
  samples: z.object({ count: z.number().int(), strands: z.array(z.number().int()) }).nullable(),
  investigations: z.array(
    z.object({
      id: z.number().int(),
      ref: z.string(),
      title: z.string(),
      status: z.string(),
      openedAt: z.string(),
      closedAt: s,
      confirmedCause: s,
      owner: s,
      sameHeat: z.boolean(),
    }),
  ),
  claims: z.array(
    z.object({
      id: z.number().int(),
      claimNo: z.string(),
      customer: z.string(),
      receivedOn: z.string(),
      defectComplained: z.string(),
      status: z.string(),
      quantityT: n,
      sameHeat: z.boolean(),
      slabs: z.array(z.string()),
    }),
  ),
  /** The record of changes in words (who, when, what), never the stored internals. */
  audit: z.array(z.object({ at: z.string(), by: s, what: z.string() })),
});
export type HeatHistory = z.infer<typeof heatHistorySchema>;

export const traceQuerySchema = z.object({ q: z.string().trim().min(1, "Enter a coil, plate, slab or heat id.").max(40) });
export const traceSchema = z.object({
  query: z.string(),
  /** What the id turned out to be. */
  found: z.enum(["coil", "plate", "slab", "heat"]),
  product: z.object({ productId: z.string(), kind: z.string(), rolledAt: s, weightT: n }).nullable(),
  slabId: s,
  history: heatHistorySchema,
});
export type Trace = z.infer<typeof traceSchema>;
