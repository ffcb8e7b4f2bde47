import multer from 'multer';
import { z } from 'zod';
import { serialSchema } from '#shared/schemas/serial';
import type { AppDeps } from '#server/deps';
import { unitErrors } from './units.errors';
import { defineRoute } from '#server/lib/http';
import { WORK_ORDER_LIMIT_BYTES, importReportSchema } from '#shared/schemas/work-orders';
import { registerUnitSchema, unitDetailSchema, unitViewSchema } from '#shared/schemas/units';
import { importUnits, registerUnit, unitDetail } from './units.service';

const serialParams = z.object({ serial: serialSchema });
/** Work-order CSVs up to 5 MB (about 80,000 rows). */
const upload = multer({
  storage: multer.memoryStorage(),
  limits: { fileSize: WORK_ORDER_LIMIT_BYTES, files: 1 },
});

export function unitsRoutes(deps: AppDeps) {
  return [
    defineRoute({
      method: 'get',
      path: '/api/units/:serial',
      access: 'signed-in',
      summary: 'A unit with its calibrations, programming status and travelers',
      request: { params: serialParams },
      responses: { 200: { description: 'The unit', schema: unitDetailSchema } },
      handle: async ({ params }, res) => {
        const { serial } = params;
        res.json(await unitDetail(deps.db, serial));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/units',
      access: ['operator', 'engineer', 'quality'],
      summary: 'Register a unit against a model',
      request: { body: registerUnitSchema },
      responses: { 201: { description: 'Registered', schema: z.object({ unit: unitViewSchema }) } },
      handle: async ({ body, caller }, res) => {
        res.status(201).json({ unit: await registerUnit(deps.db, caller.user, body) });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/units/import',
      access: ['engineer', 'quality'],
      summary: 'Import units from a work-order CSV (all rows or none)',
      multipart: { fileField: 'file', fields: {} },
      before: [upload.single('file')],
      responses: {
        201: { description: 'Every row imported', schema: importReportSchema },
        422: { description: 'Nothing imported: the rows that were refused', schema: importReportSchema },
      },
      handle: async ({ caller }, res, req) => {
        if (!req.file) throw unitErrors.importNoFile();
        const report = await importUnits(deps.db, caller.user, req.file.buffer.toString('utf8'));
        res.status(report.errors.length ? 422 : 201).json(report);
      },
    }),
  ];
}
