import { z } from "zod";
import { signInOptionsSchema } from "./sign-in";

export const slabSearchQuerySchema = z.object({
  q: z.string().trim().min(1, "Type part of a slab id.").max(40),
  limit: z.coerce.number().int().min(1).max(50).default(10),
});

export const slabHitSchema = z.object({
  slabId: z.string(),
  heatNo: z.string(),
  strandNo: z.number().int(),
  gradeCode: z.string(),
  castAt: z.string().nullable(),
  defectCount: z.number().int(),
});
export type SlabHit = z.infer<typeof slabHitSchema>;

export const plantSummarySchema = z.object({
  works: z.string().nullable(),
  caster: z.string().nullable(),
  demo: z.boolean(),
  totals: z.object({ heats: z.number(), slabs: z.number(), defects: z.number() }),
  /** The last 30 days of production on record, ending at the newest slab. */
  recent: z.object({
    from: z.string().nullable(),
    to: z.string().nullable(),
    slabs: z.number(),
    affectedSlabs: z.number(),
    defects: z.number(),
    awaitingReview: z.number(),
    topTypes: z.array(z.object({ code: z.string(), name: z.string(), defects: z.number() })),
  }),
});
export type PlantSummary = z.infer<typeof plantSummarySchema>;

/** What the sign-in page may know before anyone signs in. */
export const aboutSchema = z.object({
  product: z.literal("Strandsight"),
  works: z.string().nullable(),
  demo: z.boolean(),
  /** Listed only for the invented demo plant outside production. */
  demoAccounts: z.array(z.object({ email: z.string(), role: z.string() })),
  /** The demo accounts' password when it is the published one (README) and accounts are listed; else null. */
  demoPassword: z.string().nullable(),
  /** What the sign-in page offers: single sign-on through the plant's identity provider, and who may use a password. */
  signIn: signInOptionsSchema,
});
export type About = z.infer<typeof aboutSchema>;

export const embrCalibrationSchema = z.discriminatedUnion("kind", [
  z.object({ kind: z.literal("linear"), teslaPerAmp: z.number().min(0).max(0.01), offsetT: z.number().min(-1).max(1) }),
  z.object({
    kind: z.literal("table"),
    points: z
      .array(z.tuple([z.number().min(0).max(5000), z.number().min(0).max(2)]))
      .min(2)
      .max(50),
  }),
]);

export const strandSchema = z.object({
  id: z.number().int(),
  strandNo: z.number().int(),
  moldThicknessMm: z.number(),
  moldWidthMinMm: z.number().nullable(),
  moldWidthMaxMm: z.number().nullable(),
  moldEffectiveLengthMm: z.number(),
  senPortAreaMm2: z.number(),
  senPortCount: z.number().int(),
  embrCalibration: embrCalibrationSchema,
  embrPositionMm: z.number().nullable(),
});

export const plantSetupSchema = z.object({
  casters: z.array(
    z.object({
      id: z.number().int(),
      code: z.string(),
      name: z.string(),
      worksName: z.string(),
      machineType: z.string(),
      radiusM: z.number().nullable(),
      strands: z.array(strandSchema),
    }),
  ),
  gradeFamilies: z.array(
    z.object({
      id: z.number().int(),
      code: z.string(),
      name: z.string(),
      description: z.string().nullable(),
      grades: z.array(z.object({ id: z.number().int(), code: z.string(), name: z.string(), active: z.boolean() })),
    }),
  ),
});
export type PlantSetup = z.infer<typeof plantSetupSchema>;
