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

/** The largest work-order CSV the server reads (the upload is refused past it). */
export const WORK_ORDER_LIMIT_BYTES = 5 * 1024 * 1024;

/** The upload form: one CSV within the limit. */
export const workOrderUploadSchema = z.object({
  file: z
    .file('Choose a work-order CSV to import')
    .max(
      WORK_ORDER_LIMIT_BYTES,
      `Too large: a work-order file may be at most ${WORK_ORDER_LIMIT_BYTES / (1024 * 1024)} MB.`,
    ),
});
export type WorkOrderUpload = z.infer<typeof workOrderUploadSchema>;
