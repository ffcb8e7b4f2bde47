import type { Response } from 'express';
import { z } from 'zod';
import { serialSchema } from '#shared/schemas/serial';
import type { AppDeps } from '#server/deps';
import { errors } from '#server/lib/errors';
import { defineRoute, sendPdf } from '#server/lib/http';
import { stationMeasuredUnit } from '../calibrations/calibrations.repository';
import { findUnitBySerial } from '../units/units.service';
import { unitErrors } from '../units/units.errors';
import { currentTraveler, printTraveler } from './travelers.service';
import { travelerErrors } from './travelers.errors';
import { pageSizeSchema } from '#shared/schemas/travelers';
import { travelerDocOfUnit } from './travelers.repository';
import type { TravelerRecord } from './travelers.table';

const serialParams = z.object({ serial: serialSchema });
const docParams = z.object({ serial: serialSchema, id: z.string().uuid('Not a traveler id') });
const printBody = z.object({ pageSize: pageSizeSchema.default('A4') });

function sendTraveler(res: Response, doc: TravelerRecord, serial: string) {
  sendPdf(res, doc.pdf, `traveler-${serial}-print${doc.printNumber}.pdf`, { 'x-content-sha256': doc.sha256 });
}

const printedTravelerSchema = z.object({
  travelerId: z.string(),
  printNumber: z.number().int(),
  pageSize: z.enum(['A4', 'LETTER']),
  sha256: z.string(),
  url: z.string(),
});

export function travelersRoutes(deps: AppDeps) {
  /** A station key may read only the travelers of units it measured. */
  async function checkStationScope(stationId: string | undefined, unitId: string) {
    if (!stationId) return;
    if (!(await stationMeasuredUnit(deps.db, stationId, unitId))) throw errors.forbidden();
  }
  return [
    defineRoute({
      method: 'get',
      path: '/api/units/:serial/traveler.pdf',
      access: { people: ['operator', 'engineer', 'quality'], station: true },
      summary: 'The current traveler PDF of a unit (people, or the station that measured it)',
      request: { params: serialParams },
      responses: { 200: { description: 'The traveler PDF', contentType: 'application/pdf' } },
      handle: async ({ params, caller }, res) => {
        const { serial } = params;
        const unit = await findUnitBySerial(deps.db, serial);
        if (!unit) throw unitErrors.notFound(serial);
        await checkStationScope(caller.station?.stationId, unit.id);
        const doc = await currentTraveler(deps, unit.id, deps.clock());
        if (!doc) throw travelerErrors.none(unit.serial);
        sendTraveler(res, doc, unit.serial);
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/units/:serial/travelers/:id',
      access: { people: ['operator', 'engineer', 'quality'], station: true },
      summary: 'One earlier traveler document of a unit',
      request: { params: docParams },
      responses: { 200: { description: 'The traveler PDF', contentType: 'application/pdf' } },
      handle: async ({ params, caller }, res) => {
        const { serial, id } = params;
        const unit = await findUnitBySerial(deps.db, serial);
        if (!unit) throw unitErrors.notFound(serial);
        await checkStationScope(caller.station?.stationId, unit.id);
        const doc = await travelerDocOfUnit(deps.db, unit.id, id);
        if (!doc) throw travelerErrors.notFound();
        sendTraveler(res, doc, unit.serial);
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/units/:serial/traveler/print',
      access: ['operator', 'quality'],
      summary: 'Print (or reprint, marked with its number) the current traveler; audited',
      request: { params: serialParams, body: printBody },
      responses: { 201: { description: 'The printed document', schema: printedTravelerSchema } },
      handle: async ({ params, body, caller }, res) => {
        const { serial } = params;
        const { pageSize } = body;
        const unit = await findUnitBySerial(deps.db, serial);
        if (!unit) throw unitErrors.notFound(serial);
        const doc = await printTraveler(deps, caller.user, unit.id, unit.serial, pageSize, deps.clock());
        res.status(201).json({
          travelerId: doc.id,
          printNumber: doc.printNumber,
          pageSize: doc.pageSize,
          sha256: doc.sha256,
          url: `/api/units/${encodeURIComponent(unit.serial)}/travelers/${doc.id}`,
        });
      },
    }),
  ];
}
