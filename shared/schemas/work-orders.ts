import { z } from 'zod';

/** Work orders: units registered in bulk from a CSV. */

/** Columns of a work-order CSV, in template order; serial and model (code) are required. */
export const WORK_ORDER_COLUMNS = [
  'serial',
  'model',
  'work_order',
  'hall_board_lot',
  'magnet_ring_lot',
  'stator_lot',
] as const;

export const importRowErrorSchema = z.object({
  row: z.number().int(),
  serial: z.string().nullable(),
  message: z.string(),
});
export const importReportSchema = z.object({
  imported: z.number().int(),
  rows: z.number().int(),
  errors: z.array(importRowErrorSchema),
});
export type ImportReport = z.infer<typeof importReportSchema>;
