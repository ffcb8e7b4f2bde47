import { z } from 'zod';
import type { AppDeps } from '#server/deps';
import { defineRoute } from '#server/lib/http';
import { calibrationViewSchema } from '#shared/schemas/calibrations';
import {
  createStationKeySchema,
  createStationSchema,
  stationHealthSchema,
  stationKeyCreatedSchema,
  stationViewSchema,
  updateStationSchema,
} from '#shared/schemas/stations';
import { calibrationViews } from '../read-models/calibration-views';
import {
  attendStation,
  createStation,
  createStationKey,
  findStation,
  listStationViews,
  revokeStationKey,
  updateStation,
} from './stations.service';
import { stationErrors } from './stations.errors';

const idParams = z.object({ id: z.string().uuid('Not a station id') });
const keyParams = z.object({ id: z.string().uuid(), keyId: z.string().uuid() });
const recentQuery = z.object({ limit: z.coerce.number().int().min(1).max(200).default(20) });

/** A station counts as online when it was heard from within this many seconds. */
export const STATION_ONLINE_SECONDS = 60;

export function stationsRoutes(deps: AppDeps) {
  return [
    defineRoute({
      method: 'get',
      path: '/api/stations',
      access: 'signed-in',
      summary: 'Stations with their allowed models, attendance and last heartbeat',
      responses: {
        200: {
          description: 'Stations (keys for administrators only)',
          schema: z.object({ stations: z.array(stationViewSchema) }),
        },
      },
      handle: async ({ caller }, res) => {
        const views = await listStationViews(deps.db);
        res.json({ stations: caller.user.role === 'admin' ? views : views.map((v) => ({ ...v, keys: [] })) });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/stations/:id/recent',
      access: 'signed-in',
      summary: 'The latest calibrations at a station',
      request: { params: idParams, query: recentQuery },
      responses: {
        200: {
          description: 'The station with its newest results',
          schema: z.object({ calibrations: z.array(calibrationViewSchema) }),
        },
      },
      handle: async ({ params, query }, res) => {
        const { id } = params;
        const { limit } = query;
        if (!(await findStation(deps.db, id))) throw stationErrors.notFound();
        res.json({
          calibrations: await calibrationViews(deps.db, { stationId: id, purpose: 'station', limit }),
        });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/stations/:id/health',
      access: 'signed-in',
      summary: 'Last heartbeat and job-queue state for a station screen',
      request: { params: idParams },
      responses: { 200: { description: 'Last heard and the job queue', schema: stationHealthSchema } },
      handle: async ({ params }, res) => {
        const { id } = params;
        const station = await findStation(deps.db, id);
        if (!station) throw stationErrors.notFound();
        const now = deps.clock();
        const seconds = station.lastSeenAt
          ? Math.max(0, (now.getTime() - station.lastSeenAt.getTime()) / 1000)
          : null;
        const q = await deps.queue.stats();
        res.json({
          stationId: id,
          lastSeenAt: station.lastSeenAt?.toISOString() ?? null,
          secondsSinceSeen: seconds === null ? null : Math.round(seconds),
          online: seconds !== null && seconds <= STATION_ONLINE_SECONDS,
          queue: { waiting: q.queued, active: q.active, failed: q.failed },
        });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/stations/:id/attend',
      access: ['operator'],
      summary: 'Take over a station panel: measurements from now on name this operator',
      request: { params: idParams },
      responses: {
        200: { description: 'Attended', schema: z.object({ stationId: z.string(), attendedBy: z.string() }) },
      },
      handle: async ({ params, caller }, res) => {
        const { id } = params;
        await attendStation(deps.db, caller.user, id, deps.clock());
        res.json({ stationId: id, attendedBy: caller.user.id });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/stations/:id/events',
      access: 'signed-in',
      summary:
        'Server-Sent Events for one station: measurement received, computing, result, programming, traveler',
      request: { params: idParams },
      responses: { 200: { description: 'An event stream of the station', contentType: 'text/event-stream' } },
      handle: async ({ params }, res, req) => {
        const { id } = params;
        if (!(await findStation(deps.db, id))) throw stationErrors.notFound();
        res.writeHead(200, {
          'content-type': 'text/event-stream; charset=utf-8',
          'cache-control': 'no-cache, no-transform',
          connection: 'keep-alive',
          'x-accel-buffering': 'no',
        });
        res.write(`retry: 2000\n: connected ${deps.clock().toISOString()}\n\n`);
        const unsubscribe = deps.events.subscribe((e) => {
          if (e.stationId !== id) return;
          res.write(`event: ${e.type}\ndata: ${JSON.stringify(e)}\n\n`);
        });
        const keepAlive = setInterval(() => res.write(`: keep-alive\n\n`), 15_000);
        req.on('close', () => {
          clearInterval(keepAlive);
          unsubscribe();
        });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/admin/stations',
      access: ['admin'],
      summary: 'Create a station',
      request: { body: createStationSchema },
      responses: { 201: { description: 'Created', schema: z.object({ station: stationViewSchema }) } },
      handle: async ({ body, caller }, res) => {
        const row = await createStation(deps.db, caller.user, body);
        res.status(201).json({ station: (await listStationViews(deps.db)).find((s) => s.id === row.id) });
      },
    }),
    defineRoute({
      method: 'patch',
      path: '/api/admin/stations/:id',
      access: ['admin'],
      summary: 'Change a station: name, line, allowed models',
      request: { params: idParams, body: updateStationSchema },
      responses: { 200: { description: 'Changed', schema: z.object({ station: stationViewSchema }) } },
      handle: async ({ params, body, caller }, res) => {
        const { id } = params;
        await updateStation(deps.db, caller.user, id, body);
        res.json({ station: (await listStationViews(deps.db)).find((s) => s.id === id) });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/admin/stations/:id/keys',
      access: ['admin'],
      summary: 'Create a station API key (shown once)',
      request: { params: idParams, body: createStationKeySchema },
      responses: { 201: { description: 'The key, shown this once', schema: stationKeyCreatedSchema } },
      handle: async ({ params, body, caller }, res) => {
        const { id } = params;
        const { label } = body;
        res.status(201).json(await createStationKey(deps.db, caller.user, id, label));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/admin/stations/:id/keys/:keyId/revoke',
      access: ['admin'],
      summary: 'Revoke a station API key',
      request: { params: keyParams },
      responses: { 204: { description: 'Revoked' } },
      handle: async ({ params, caller }, res) => {
        const { id, keyId } = params;
        await revokeStationKey(deps.db, caller.user, id, keyId, deps.clock());
        res.status(204).end();
      },
    }),
  ];
}
