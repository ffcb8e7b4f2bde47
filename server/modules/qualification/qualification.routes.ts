import { z } from 'zod';
import type { AppDeps } from '#server/deps';
import { defineRoute, sendPdf } from '#server/lib/http';
import {
  biasQuerySchema,
  certifyReferenceUnitSchema,
  createReferenceUnitSchema,
  overrideSchema,
  plantShiftsSchema,
  qualificationMeasurementSchema,
  qualificationPolicySchema,
  qualificationRunViewSchema,
  qualificationStateSchema,
  referenceUnitViewSchema,
} from '#shared/schemas/qualification';
import { acceptQualificationReading, findRun, stationRuns } from './qualification-readings.service';
import {
  certifyReferenceUnit,
  createReferenceUnit,
  listReferenceUnits,
  referenceReadings,
} from './reference-units.service';
import {
  getPolicy,
  getShifts,
  grantOverride,
  setPolicy,
  setShifts,
  stationQualification,
  type QualificationDeps,
} from './qualification.service';
import { gaugeStudyRoutes } from './gauge-studies.routes';
import { renderQualificationSlip } from './qualification.pdf';

const idParams = z.object({ id: z.uuid() });
const readingsQuery = z.object({ stationId: z.uuid('Choose a station.') });
const pdf = (description: string) => ({ 200: { description, contentType: 'application/pdf' } });
const readingsResponse = z.object({ readings: z.array(qualificationRunViewSchema) });
const referenceResponse = z.object({ referenceUnit: referenceUnitViewSchema });
const policyResponse = z.object({ policy: qualificationPolicySchema.nullable() });
const shiftsResponse = plantShiftsSchema.extend({ timeZone: z.string() });
const readingResponse = z.object({
  run: qualificationRunViewSchema,
  state: qualificationStateSchema,
  repeated: z.boolean(),
});
const overrideResponse = z.object({
  override: z.object({ id: z.string(), stationId: z.string(), reason: z.string(), expiresAt: z.string() }),
});
const ENGINEERS = ['engineer'] as const;

export function qualificationDeps(deps: AppDeps): QualificationDeps {
  return {
    db: deps.db,
    pool: deps.pool,
    clock: deps.clock,
    timeZone: deps.env.PLANT_TIME_ZONE,
    logger: deps.logger,
    mailer: deps.mailer,
    publicUrl: deps.env.PUBLIC_URL,
  };
}

/** Station qualification: reference units, policies, shifts, readings, locks and their lifting. */
export function qualificationRoutes(deps: AppDeps) {
  const q = qualificationDeps(deps);
  const state = async (stationId: string) => {
    const { decision: _decision, ...view } = await stationQualification(q, stationId);
    return view;
  };
  return [
    ...gaugeStudyRoutes(deps),
    defineRoute({
      method: 'post',
      path: '/api/station/qualification-readings',
      access: 'station',
      summary:
        'Post a reading of a reference unit (the measurement contract); 201 with the verdict and the station state',
      request: { body: qualificationMeasurementSchema },
      responses: {
        201: { description: 'The reading, its verdict and the station state', schema: readingResponse },
        200: { description: 'A repeated post: the stored reading', schema: readingResponse },
      },
      handle: async ({ body, caller }, res) => {
        const out = await acceptQualificationReading(q, caller.station, body);
        res.status(out.repeated ? 200 : 201).json(out);
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/station/qualification',
      access: 'station',
      summary: "This station's qualification state (whether production posts are accepted)",
      responses: { 200: { description: 'The state in words', schema: qualificationStateSchema } },
      handle: async ({ caller }, res) => {
        res.json(await state(caller.station.stationId));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/stations/:id/qualification',
      access: 'signed-in',
      summary: "A station's qualification state, in words",
      request: { params: idParams },
      responses: { 200: { description: 'The state in words', schema: qualificationStateSchema } },
      handle: async ({ params }, res) => {
        res.json(await state(params.id));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/stations/:id/qualification/readings',
      access: 'signed-in',
      summary: "A station's reference readings, oldest first (the bias chart)",
      request: { params: idParams, query: biasQuerySchema },
      responses: { 200: { description: 'Readings, oldest first', schema: readingsResponse } },
      handle: async ({ params, query }, res) => {
        res.json({ readings: await stationRuns(deps.db, params.id, query.limit) });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/qualification/readings/:id/slip.pdf',
      access: 'signed-in',
      summary: 'The qualification slip of one reference reading (PDF, printed on demand)',
      request: { params: idParams },
      responses: pdf('The slip'),
      handle: async ({ params }, res) => {
        const run = await findRun(deps.db, params.id);
        const slip = await renderQualificationSlip(run, deps.env.PLANT_TIME_ZONE, deps.clock());
        sendPdf(res, slip, `qualification-${run.id}.pdf`);
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/stations/:id/qualification/policy',
      access: 'signed-in',
      summary: "A station's qualification policy (null: never locked)",
      request: { params: idParams },
      responses: { 200: { description: 'The policy or null', schema: policyResponse } },
      handle: async ({ params }, res) => {
        res.json({ policy: await getPolicy(deps.db, params.id) });
      },
    }),
    defineRoute({
      method: 'put',
      path: '/api/stations/:id/qualification/policy',
      access: ENGINEERS,
      summary: "Set a station's qualification policy (audited)",
      request: { params: idParams, body: qualificationPolicySchema },
      responses: { 200: { description: 'The policy as saved', schema: policyResponse } },
      handle: async ({ params, body, caller }, res) => {
        res.json({ policy: await setPolicy(deps.db, caller.user, params.id, body, deps.clock()) });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/stations/:id/qualification/override',
      access: ENGINEERS,
      summary: "Lift a station's qualification lock for a limited time, with a reason (audited)",
      request: { params: idParams, body: overrideSchema },
      responses: { 201: { description: 'The lifted lock and when it returns', schema: overrideResponse } },
      handle: async ({ params, body, caller }, res) => {
        res.status(201).json({ override: await grantOverride(q, caller.user, params.id, body) });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/qualification/reference-units',
      access: 'signed-in',
      summary: 'Reference units of every model',
      responses: {
        200: {
          description: 'Every reference unit',
          schema: z.object({ referenceUnits: z.array(referenceUnitViewSchema) }),
        },
      },
      handle: async (_input, res) => {
        res.json({ referenceUnits: await listReferenceUnits(deps.db) });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/qualification/reference-units',
      access: ENGINEERS,
      summary:
        'Mark a registered unit as a reference unit, with its certified offset and tolerance (audited)',
      request: { body: createReferenceUnitSchema },
      responses: { 201: { description: 'The reference unit', schema: referenceResponse } },
      handle: async ({ body, caller }, res) => {
        res.status(201).json({ referenceUnit: await createReferenceUnit(deps.db, caller.user, body) });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/qualification/reference-units/:id/readings',
      access: 'signed-in',
      summary: "A reference unit's readings at one station, newest first (to certify from)",
      request: { params: idParams, query: readingsQuery },
      responses: { 200: { description: 'Readings, newest first', schema: readingsResponse } },
      handle: async ({ params, query }, res) => {
        res.json({ readings: await referenceReadings(deps.db, params.id, query.stationId) });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/qualification/reference-units/:id/certify',
      access: ENGINEERS,
      summary:
        "Set a reference unit's certified value from chosen readings at a station (each one left out with a reason), or its latest N (audited)",
      request: { params: idParams, body: certifyReferenceUnitSchema },
      responses: { 200: { description: 'The reference unit as certified', schema: referenceResponse } },
      handle: async ({ params, body, caller }, res) => {
        res.json({ referenceUnit: await certifyReferenceUnit(deps.db, caller.user, params.id, body) });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/qualification/shifts',
      access: 'signed-in',
      summary: "The plant's shift starts (local plant time)",
      responses: { 200: { description: 'Shifts by start time', schema: shiftsResponse } },
      handle: async (_input, res) => {
        res.json({ ...(await getShifts(deps.db)), timeZone: deps.env.PLANT_TIME_ZONE });
      },
    }),
    defineRoute({
      method: 'put',
      path: '/api/qualification/shifts',
      access: ENGINEERS,
      summary: "Replace the plant's shift starts (audited)",
      request: { body: plantShiftsSchema },
      responses: { 200: { description: 'The shifts as saved', schema: shiftsResponse } },
      handle: async ({ body, caller }, res) => {
        res.json({ ...(await setShifts(deps.db, caller.user, body)), timeZone: deps.env.PLANT_TIME_ZONE });
      },
    }),
  ];
}
