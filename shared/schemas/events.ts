import { z } from 'zod';
import { calibrationVerdictSchema } from './calibrations';

/**
 * Events of the station line, pushed to the operator's screen (Server-Sent Events) and used to wake
 * long-polls. Each names the station and unit so a listener can filter.
 */
export const lineEventSchema = z.discriminatedUnion('type', [
  z.object({
    type: z.literal('measurement.received'),
    stationId: z.string(),
    unitId: z.string(),
    serial: z.string(),
    measurementId: z.string(),
    at: z.string(),
  }),
  z.object({
    type: z.literal('calibration.computing'),
    stationId: z.string(),
    unitId: z.string(),
    serial: z.string(),
    measurementId: z.string(),
    at: z.string(),
  }),
  z.object({
    type: z.literal('calibration.committed'),
    stationId: z.string(),
    unitId: z.string(),
    serial: z.string(),
    measurementId: z.string(),
    calibrationId: z.string(),
    verdict: calibrationVerdictSchema,
    at: z.string(),
  }),
  z.object({
    type: z.literal('programming.confirmed'),
    stationId: z.string(),
    unitId: z.string(),
    serial: z.string(),
    calibrationId: z.string(),
    matches: z.boolean(),
    at: z.string(),
  }),
  z.object({
    type: z.literal('traveler.ready'),
    stationId: z.string(),
    unitId: z.string(),
    serial: z.string(),
    calibrationId: z.string(),
    travelerId: z.string(),
    at: z.string(),
  }),
  z.object({
    type: z.literal('station.heartbeat'),
    stationId: z.string(),
    at: z.string(),
  }),
]);
export type LineEvent = z.infer<typeof lineEventSchema>;
export type LineEventType = LineEvent['type'];
