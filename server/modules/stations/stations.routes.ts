import { z } from 'zod';
import type { AppDeps } from '../../deps';
import { route } from '../../lib/http';
import {
  createStationKeySchema,
  createStationSchema,
  updateStationSchema,
} from '../../../shared/schemas/line';
import { calibrationViews } from '../measurements/measurements.service';
import { calibrationsOf } from '../measurements/calibrations.repository';
import {
  attendStation,
  createStation,
  createStationKey,
  findStation,
  listStationViews,
  revokeStationKey,
  stationErrors,
  updateStation,
} from './stations.service';

const idParams = z.object({ id: z.string().uuid('Not a station id') });
const keyParams = z.object({ id: z.string().uuid(), keyId: z.string().uuid() });
const recentQuery = z.object({ limit: z.coerce.number().int().min(1).max(200).default(20) });

/** A station counts as online when it was heard from within this many seconds. */
export const STATION_ONLINE_SECONDS = 60;

export function stationsRoutes(deps: AppDeps) {
  return [
    route({
      method: 'get',
      path: '/api/stations',
      access: 'signed-in',
      summary: 'Stations with their allowed models, attendance and last heartbeat',
      handler: async (req, res) => {
        const views = await listStationViews(deps.db);
        res.json({ stations: req.user!.role === 'admin' ? views : views.map((v) => ({ ...v, keys: [] })) });
      },
    }),
    route({
      method: 'get',
      path: '/api/stations/:id/recent',
      access: 'signed-in',
      summary: 'The latest calibrations at a station',
      query: recentQuery,
      handler: async (req, res) => {
        const { id } = idParams.parse(req.params);
        const { limit } = recentQuery.parse(req.query);
        if (!(await findStation(deps.db, id))) throw stationErrors.notFound();
        res.json({
          calibrations: await calibrationViews(deps.db, calibrationsOf.station(id), limit),
        });
      },
    }),
    route({
      method: 'get',
      path: '/api/stations/:id/health',
      access: 'signed-in',
      summary: 'Last heartbeat and job-queue state for a station screen',
      handler: async (req, res) => {
        const { id } = idParams.parse(req.params);
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
    route({
      method: 'post',
      path: '/api/stations/:id/attend',
      access: ['operator'],
      summary: 'Take over a station panel: measurements from now on name this operator',
      handler: async (req, res) => {
        const { id } = idParams.parse(req.params);
        await attendStation(deps.db, req.user!, id, deps.clock());
        res.json({ stationId: id, attendedBy: req.user!.id });
      },
    }),
    route({
      method: 'get',
      path: '/api/stations/:id/events',
      access: 'signed-in',
      summary:
        'Server-Sent Events for one station: measurement received, computing, result, programming, traveler',
      handler: async (req, res) => {
        const { id } = idParams.parse(req.params);
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
    route({
      method: 'post',
      path: '/api/admin/stations',
      access: ['admin'],
      summary: 'Create a station',
      body: createStationSchema,
      handler: async (req, res) => {
        const row = await createStation(deps.db, req.user!, createStationSchema.parse(req.body));
        res.status(201).json({ station: (await listStationViews(deps.db)).find((s) => s.id === row.id) });
      },
    }),
    route({
      method: 'patch',
      path: '/api/admin/stations/:id',
      access: ['admin'],
      summary: 'Change a station: name, line, allowed models',
      body: updateStationSchema,
      handler: async (req, res) => {
        const { id } = idParams.parse(req.params);
        await updateStation(deps.db, req.user!, id, updateStationSchema.parse(req.body));
        res.json({ station: (await listStationViews(deps.db)).find((s) => s.id === id) });
      },
    }),
    route({
      method: 'post',
      path: '/api/admin/stations/:id/keys',
      access: ['admin'],
      summary: 'Create a station API key (shown once)',
      body: createStationKeySchema,
      handler: async (req, res) => {
        const { id } = idParams.parse(req.params);
        const { label } = createStationKeySchema.parse(req.body);
        res.status(201).json(await createStationKey(deps.db, req.user!, id, label));
      },
    }),
    route({
      method: 'post',
      path: '/api/admin/stations/:id/keys/:keyId/revoke',
      access: ['admin'],
      summary: 'Revoke a station API key',
      handler: async (req, res) => {
        const { id, keyId } = keyParams.parse(req.params);
        await revokeStationKey(deps.db, req.user!, id, keyId, deps.clock());
        res.status(204).end();
      },
    }),
  ];
}
