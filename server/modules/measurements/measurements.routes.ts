import { z } from 'zod';
import type { AppDeps } from '#server/deps';
import { defineRoute } from '#server/lib/http';
import {
  measurementAcceptedSchema,
  measurementResultSchema,
  resultQuerySchema,
} from '#shared/schemas/measurements';
import { programmingConfirmationSchema, recomputeSchema } from '#shared/schemas/calibrations';
import { measurementIdSchema, measurementSchema } from '#shared/schemas/measurement';
import { serialSchema } from '#shared/schemas/serial';
import { recordHeartbeat } from '../stations/stations.service';
import {
  assertProductionAllowed,
  assertProductionAllowedGiven,
} from '../qualification/qualification.service';
import { measurementIdTaken } from './measurements.repository';
import { notifyLineEvent } from '../events/event-hub';
import multer from 'multer';
import { measurementErrors } from './measurements.errors';
import {
  acceptMeasurement,
  confirmProgramming,
  measurementFromCapture,
  measurementResult,
  requestRecompute,
  type MeasurementsContext,
} from './measurements.service';

/** Sampled captures up to 32 MB (about 400,000 rows of seven channels). */
export const CAPTURE_LIMIT_BYTES = 32 * 1024 * 1024;
const captureUpload = multer({
  storage: multer.memoryStorage(),
  limits: { fileSize: CAPTURE_LIMIT_BYTES, files: 1, fields: 10 },
});
const captureFields = z.object({
  measurementId: measurementIdSchema,
  serial: serialSchema,
  direction: z.enum(['forward', 'reverse']).optional(),
});

const idParams = z.object({ measurementId: measurementIdSchema });

// Answers without a shared contract of their own (the station integrators' document reads them).
const programmingRecordedSchema = z.object({
  matches: z.boolean(),
  expectedCounts: z.number().int(),
  confirmedAt: z.string(),
});
const recomputeAnswerSchema = z.object({
  measurementId: z.string(),
  serial: z.string(),
  recipe: z.object({ id: z.string(), version: z.number().int() }),
  engineVersion: z.string(),
  status: z.enum(['queued', 'computed']),
  calibrationId: z.string().nullable(),
});
const heartbeatAnswerSchema = z.object({ stationId: z.string(), stationName: z.string(), at: z.string() });

/** The station protocol: what a test station's software calls with its own key. */
export function measurementsRoutes(deps: AppDeps) {
  const ctx: MeasurementsContext = { db: deps.db, pool: deps.pool, queue: deps.queue, clock: deps.clock };
  // A station whose qualification is overdue or failed is refused (423) before anything is stored.
  const gate = { db: deps.db, pool: deps.pool, clock: deps.clock, timeZone: deps.env.PLANT_TIME_ZONE };
  // Idempotency comes first: a post repeating a stored measurement gets its stored answer even while the
  // station is locked (the station lost the first answer, not the right to it); a new one meets the gate.
  const gateNew = async (stationId: string, measurementId: unknown, serial: unknown) => {
    const id = measurementIdSchema.safeParse(measurementId).data;
    if (id && (await measurementIdTaken(deps.pool, id))) return;
    await assertProductionAllowed(gate, stationId, measurementSchema.shape.serial.safeParse(serial).data);
  };
  return [
    defineRoute({
      method: 'post',
      path: '/api/station/measurements',
      access: 'station',
      summary: 'Post a measurement (idempotent on measurementId); 202 with the result URL',
      serviceParsedBody: measurementSchema,
      responses: {
        202: {
          description: 'Stored and queued (or a repeat not computed yet)',
          schema: measurementAcceptedSchema,
        },
        200: { description: 'A repeat of a computed measurement', schema: measurementAcceptedSchema },
      },
      handle: async ({ caller }, res, req) => {
        const stationId = caller.station.stationId;
        // The gate's facts come with the intake's first statement (a repeat skips the gate there).
        const accepted = await acceptMeasurement(ctx, caller.station, req.body, {
          raw: req.rawBody,
          gate: {
            judge: (facts, serial) => assertProductionAllowedGiven(gate, stationId, serial, facts),
            beforeRefusingBody: () => gateNew(stationId, req.body?.measurementId, req.body?.serial),
          },
        });
        res
          .status(accepted.repeated && accepted.status === 'computed' ? 200 : 202)
          .location(accepted.resultUrl)
          .json(accepted);
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/station/captures',
      access: 'station',
      summary: 'Post a sampled capture (CSV: time_s, va,vb,vc or vab,vbc,vca, ha,hb,hc) as a measurement',
      multipart: {
        fileField: 'capture',
        fields: {
          measurementId: 'idempotency key chosen by the station',
          serial: 'unit serial as scanned',
          direction: 'forward | reverse (optional: taken from the hall sequence)',
        },
      },
      before: [captureUpload.single('capture')],
      request: { body: captureFields },
      responses: {
        202: {
          description: 'Stored and queued (or a repeat not computed yet)',
          schema: measurementAcceptedSchema,
        },
        200: { description: 'A repeat of a computed measurement', schema: measurementAcceptedSchema },
      },
      handle: async ({ body: fields, caller }, res, req) => {
        await gateNew(caller.station.stationId, fields.measurementId, fields.serial);
        if (!req.file) throw measurementErrors.captureNoFile();
        // The bytes are parsed as they are; the text is made only for a capture worth storing.
        const measurement = await measurementFromCapture(ctx, caller.station, fields, req.file.buffer);
        const accepted = await acceptMeasurement(ctx, caller.station, measurement, {
          source: 'capture',
          raw: req.file.buffer.toString('utf8'),
        });
        res
          .status(accepted.repeated && accepted.status === 'computed' ? 200 : 202)
          .location(accepted.resultUrl)
          .json(accepted);
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/station/measurements/:measurementId/result',
      access: 'station',
      summary: 'The calibration of a measurement; waitMs long-polls until it commits',
      request: { params: idParams, query: resultQuerySchema },
      responses: { 200: { description: 'The calibration, or pending', schema: measurementResultSchema } },
      handle: async ({ params: { measurementId }, query: { waitMs }, caller }, res, req) => {
        const view = await waitForResult(deps, caller.station.stationId, measurementId, waitMs, req);
        res.json({ measurementId, status: view ? 'computed' : 'pending', calibration: view });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/station/measurements/:measurementId/programming',
      access: 'station',
      summary: 'Confirm the value written into the unit and read back',
      request: { params: idParams, body: programmingConfirmationSchema },
      responses: { 200: { description: 'Whether the read-back matched', schema: programmingRecordedSchema } },
      handle: async ({ params: { measurementId }, body, caller }, res) => {
        res.json(await confirmProgramming(ctx, caller.station, measurementId, body));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/measurements/:measurementId/recompute',
      access: ['engineer'],
      summary:
        'Recompute a stored measurement with a released recipe version (analysis only; the unit is unchanged)',
      request: { params: idParams, body: recomputeSchema },
      responses: {
        202: { description: 'Queued', schema: recomputeAnswerSchema },
        200: { description: 'Computed already', schema: recomputeAnswerSchema },
      },
      handle: async ({ params: { measurementId }, body: input, caller }, res) => {
        const out = await requestRecompute(ctx, caller.user, measurementId, input);
        res.status(out.status === 'queued' ? 202 : 200).json(out);
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/station/heartbeat',
      access: 'station',
      summary: 'Tell the server the station is alive',
      responses: { 200: { description: 'Heard', schema: heartbeatAnswerSchema } },
      handle: async ({ caller: { station } }, res) => {
        const now = deps.clock();
        await recordHeartbeat(deps.db, station.stationId, now);
        await notifyLineEvent(deps.db, {
          type: 'station.heartbeat',
          stationId: station.stationId,
          at: now.toISOString(),
        });
        res.json({
          stationId: station.stationId,
          stationName: station.stationName,
          at: now.toISOString(),
        });
      },
    }),
  ];
}

/**
 * Returns the calibration at once if it exists; otherwise waits (up to waitMs) for its commit event
 * and reads it then. Subscribes before the first read, so a commit between the two is not missed.
 */
export async function waitForResult(
  deps: AppDeps,
  stationId: string | null,
  measurementId: string,
  waitMs: number,
  req: { on(event: 'close', cb: () => void): unknown },
) {
  let wake: () => void = () => {};
  const woke = new Promise<void>((r) => (wake = r));
  const unsubscribe = deps.events.subscribe((e) => {
    if (e.type === 'calibration.committed' && e.measurementId === measurementId) wake();
  });
  try {
    const first = await measurementResult(
      deps.pool,
      stationId ? { stationId, stationName: '', keyId: '' } : null,
      measurementId,
    );
    if (first.view || waitMs === 0) return first.view;
    let timer: NodeJS.Timeout | undefined;
    await Promise.race([
      woke,
      new Promise<void>((r) => {
        timer = setTimeout(r, waitMs);
        req.on('close', () => r());
      }),
    ]);
    clearTimeout(timer);
    return (await measurementResult(deps.pool, null, measurementId)).view;
  } finally {
    unsubscribe();
  }
}
