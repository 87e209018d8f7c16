import { z } from "zod";

/** Every error the API returns has this shape, with a 4xx or 5xx status. */
export const apiErrorSchema = z
  .object({
    error: z.object({
      code: z.string(),
      message: z.string(),
      details: z.unknown().optional(),
    }),
  })
  .meta({ id: "Error" });
export type ApiErrorBody = z.infer<typeof apiErrorSchema>;

export const healthSchema = z.object({ status: z.literal("ok") });

/** Paging for list endpoints: 1-based page, bounded page size. */
export const pageQuerySchema = z.object({
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(500).default(50),
});

export function pagedSchema<T extends z.ZodTypeAny>(item: T) {
  return z.object({
    items: z.array(item),
    total: z.number().int(),
    page: z.number().int(),
    pageSize: z.number().int(),
  });
}
