import { z } from 'zod';

/** Travelers: the printed document that goes with a unit. */

/** Paper sizes a traveler is laid out for (pgEnum `page_size`). */
export const PAGE_SIZES = ['A4', 'LETTER'] as const;
export const pageSizeSchema = z.enum(PAGE_SIZES);
export type PageSize = z.infer<typeof pageSizeSchema>;

/** A stored traveler of a unit, newest first in a unit's detail. */
export const travelerSummarySchema = z.object({
  id: z.string(),
  printNumber: z.number().int(),
  pageSize: z.string(),
  sha256: z.string(),
  createdAt: z.string(),
});
