import { z } from 'zod';
import type { AppDeps } from '../../deps';
import { route, sendPdf } from '../../lib/http';
import {
  biasQuerySchema,
  certifyReferenceUnitSchema,
  createReferenceUnitSchema,
  overrideSchema,
  plantShiftsSchema,
  qualificationMeasurementSchema,
  qualificationPolicySchema,
} from '../../../shared/schemas/qualification';
import {
  acceptQualificationReading,
  certifyReferenceUnit,
  createReferenceUnit,
  findRun,
  getPolicy,
  getShifts,
  grantOverride,
  listReferenceUnits,
  setPolicy,
  setShifts,
  stationQualification,
  stationRuns,
  type QualificationDeps,
} from './qualification.service';

import { gaugeStudyRoutes } from './gauge-studies.routes';
import { renderQualificationSlip } from './qualification.pdf';

const idParams = z.object({ id: z.uuid() });

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
    route({
      method: 'post',
      path: '/api/station/qualification-readings',
      access: 'station',
      summary:
        'Post a reading of a reference unit (the measurement contract); 201 with the verdict and the station state',
      body: qualificationMeasurementSchema,
      handler: async (req, res) => {
        const out = await acceptQualificationReading(q, req.station!, req.body);
        res.status(out.repeated ? 200 : 201).json(out);
      },
    }),
    route({
      method: 'get',
      path: '/api/station/qualification',
      access: 'station',
      summary: "This station's qualification state (whether production posts are accepted)",
      handler: async (req, res) => {
        res.json(await state(req.station!.stationId));
      },
    }),
    route({
      method: 'get',
      path: '/api/stations/:id/qualification',
      access: 'signed-in',
      summary: "A station's qualification state, in words",
      handler: async (req, res) => {
        res.json(await state(idParams.parse(req.params).id));
      },
    }),
    route({
      method: 'get',
      path: '/api/stations/:id/qualification/readings',
      access: 'signed-in',
      summary: "A station's reference readings, oldest first (the bias chart)",
      query: biasQuerySchema,
      handler: async (req, res) => {
        const { limit } = biasQuerySchema.parse(req.query);
        res.json({ readings: await stationRuns(deps.db, idParams.parse(req.params).id, limit) });
      },
    }),
    route({
      method: 'get',
      path: '/api/qualification/readings/:id/slip.pdf',
      access: 'signed-in',
      summary: 'The qualification slip of one reference reading (PDF, printed on demand)',
      handler: async (req, res) => {
        const run = await findRun(deps.db, idParams.parse(req.params).id);
        const pdf = await renderQualificationSlip(run, deps.env.PLANT_TIME_ZONE, deps.clock());
        sendPdf(res, pdf, `qualification-${run.id}.pdf`);
      },
    }),
    route({
      method: 'get',
      path: '/api/stations/:id/qualification/policy',
      access: 'signed-in',
      summary: "A station's qualification policy (null: never locked)",
      handler: async (req, res) => {
        res.json({ policy: await getPolicy(deps.db, idParams.parse(req.params).id) });
      },
    }),
    route({
      method: 'put',
      path: '/api/stations/:id/qualification/policy',
      access: ['engineer'],
      summary: "Set a station's qualification policy (audited)",
      body: qualificationPolicySchema,
      handler: async (req, res) => {
        const policy = qualificationPolicySchema.parse(req.body);
        res.json({
          policy: await setPolicy(deps.db, req.user!, idParams.parse(req.params).id, policy, deps.clock()),
        });
      },
    }),
    route({
      method: 'post',
      path: '/api/stations/:id/qualification/override',
      access: ['engineer'],
      summary: "Lift a station's qualification lock for a limited time, with a reason (audited)",
      body: overrideSchema,
      handler: async (req, res) => {
        const input = overrideSchema.parse(req.body);
        res
          .status(201)
          .json({ override: await grantOverride(q, req.user!, idParams.parse(req.params).id, input) });
      },
    }),
    route({
      method: 'get',
      path: '/api/qualification/reference-units',
      access: 'signed-in',
      summary: 'Reference units of every model',
      handler: async (_req, res) => {
        res.json({ referenceUnits: await listReferenceUnits(deps.db) });
      },
    }),
    route({
      method: 'post',
      path: '/api/qualification/reference-units',
      access: ['engineer'],
      summary:
        'Mark a registered unit as a reference unit, with its certified offset and tolerance (audited)',
      body: createReferenceUnitSchema,
      handler: async (req, res) => {
        const input = createReferenceUnitSchema.parse(req.body);
        res.status(201).json({ referenceUnit: await createReferenceUnit(deps.db, req.user!, input) });
      },
    }),
    route({
      method: 'post',
      path: '/api/qualification/reference-units/:id/certify',
      access: ['engineer'],
      summary: "Set a reference unit's certified value from its latest readings at a station (audited)",
      body: certifyReferenceUnitSchema,
      handler: async (req, res) => {
        const input = certifyReferenceUnitSchema.parse(req.body);
        res.json({
          referenceUnit: await certifyReferenceUnit(deps.db, req.user!, idParams.parse(req.params).id, input),
        });
      },
    }),
    route({
      method: 'get',
      path: '/api/qualification/shifts',
      access: 'signed-in',
      summary: "The plant's shift starts (local plant time)",
      handler: async (_req, res) => {
        res.json({ ...(await getShifts(deps.db)), timeZone: deps.env.PLANT_TIME_ZONE });
      },
    }),
    route({
      method: 'put',
      path: '/api/qualification/shifts',
      access: ['engineer'],
      summary: "Replace the plant's shift starts (audited)",
      body: plantShiftsSchema,
      handler: async (req, res) => {
        res.json(await setShifts(deps.db, req.user!, plantShiftsSchema.parse(req.body)));
      },
    }),
  ];
}
