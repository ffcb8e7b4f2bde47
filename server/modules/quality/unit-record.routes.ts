import { z } from 'zod';
import type { AppDeps } from '#server/deps';
import { defineRoute, sendPdf } from '#server/lib/http';
import type { Access } from '#shared/schemas/roles';
import { serialSchema } from '#shared/schemas/serial';
import { unitRecordSchema } from '#shared/schemas/unit-record';
import { exportUnitRecordPdf, exportUnitRecordZip } from './unit-record.export';
import { unitRecord } from './unit-record.service';

/** Who reads a unit's whole record (its audit entries included): quality staff and engineers (and admins). */
const RECORD_READERS = ['quality', 'engineer'] as const satisfies Access;
const serialParams = z.object({ serial: serialSchema });

export function unitRecordRoutes(deps: AppDeps) {
  const ctx = { db: deps.db, clock: deps.clock };
  return [
    defineRoute({
      method: 'get',
      path: '/api/units/:serial/record',
      access: RECORD_READERS,
      summary: "A unit's whole record: every event in time order, worded for people, with names",
      request: { params: serialParams },
      responses: { 200: { description: 'The record', schema: unitRecordSchema } },
      handle: async ({ params }, res) => {
        res.json(await unitRecord(deps.db, params.serial));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/units/:serial/record.pdf',
      access: RECORD_READERS,
      summary: "The unit's calibration record as a PDF (audited)",
      request: { params: serialParams },
      responses: { 200: { description: 'The PDF', contentType: 'application/pdf' } },
      handle: async ({ params, caller }, res) => {
        const file = await exportUnitRecordPdf(ctx, caller.user, params.serial);
        sendPdf(res, file.bytes, file.fileName, { 'x-content-sha256': file.sha256 });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/units/:serial/record.zip',
      access: RECORD_READERS,
      summary:
        "The unit's record as a ZIP: the calibration record PDF, every measurement as posted and a manifest of SHA-256 sums (audited)",
      request: { params: serialParams },
      responses: { 200: { description: 'The ZIP', contentType: 'application/zip' } },
      handle: async ({ params, caller }, res) => {
        const file = await exportUnitRecordZip(ctx, caller.user, params.serial);
        res.setHeader('content-type', 'application/zip');
        res.setHeader('content-disposition', `attachment; filename="${file.fileName}"`);
        res.setHeader('cache-control', 'no-store');
        res.setHeader('x-content-sha256', file.sha256);
        res.end(file.bytes);
      },
    }),
  ];
}
