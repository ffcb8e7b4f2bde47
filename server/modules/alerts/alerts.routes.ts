import { z } from 'zod';
import type { AppDeps } from '#server/deps';
import { defineRoute } from '#server/lib/http';
import type { Access } from '#shared/schemas/roles';
import {
  acknowledgeAlertSchema,
  alertListQuerySchema,
  alertSubscriptionSchema,
  alertViewSchema,
  watchedChartListQuerySchema,
  watchedChartSettingsSchema,
  watchedChartViewSchema,
} from '#shared/schemas/alerts';
import { acknowledgeAlert, isSubscribed, listAlerts, setSubscription } from './alert-list.service';
import { listWatchedCharts, setWatchedChart } from './watched-charts.service';

const idParams = z.object({ id: z.uuid() });
const READERS = ['engineer', 'quality'] as const satisfies Access;
const ENGINEERS = ['engineer'] as const satisfies Access;

export function alertsRoutes(deps: AppDeps) {
  return [
    defineRoute({
      method: 'get',
      path: '/api/alerts',
      // Every signed-in role may read alerts: operators see their station's on its health panel.
      access: 'signed-in',
      summary: 'Alerts of the watched control charts (open by default; by station)',
      request: { query: alertListQuerySchema },
      responses: {
        200: { description: 'Alerts, newest first', schema: z.object({ alerts: z.array(alertViewSchema) }) },
      },
      handle: async ({ query }, res) => {
        res.json({ alerts: await listAlerts(deps.db, query) });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/alerts/:id/acknowledge',
      access: ENGINEERS,
      summary: 'Acknowledge an open alert with a comment (audited)',
      request: { params: idParams, body: acknowledgeAlertSchema },
      responses: { 204: { description: 'Acknowledged' } },
      handle: async ({ params, body, caller }, res) => {
        await acknowledgeAlert(deps.db, deps.clock, caller.user, params.id, body.comment);
        res.status(204).end();
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/alerts/subscription',
      access: READERS,
      summary: 'Whether the signed-in person gets alert e-mails',
      responses: { 200: { description: 'The switch', schema: alertSubscriptionSchema } },
      handle: async ({ caller }, res) => {
        res.json({ subscribed: await isSubscribed(deps.db, caller.user.id) });
      },
    }),
    defineRoute({
      method: 'put',
      path: '/api/alerts/subscription',
      access: READERS,
      summary: 'Subscribe to or unsubscribe from alert e-mails',
      request: { body: alertSubscriptionSchema },
      responses: { 200: { description: 'The switch', schema: alertSubscriptionSchema } },
      handle: async ({ body, caller }, res) => {
        res.json({ subscribed: await setSubscription(deps.db, caller.user, body.subscribed) });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/alerts/charts',
      access: READERS,
      summary: 'The watched charts (by model or station): kind, rules, EWMA weights, whose settings',
      request: { query: watchedChartListQuerySchema },
      responses: {
        200: { description: 'Watched charts', schema: z.object({ charts: z.array(watchedChartViewSchema) }) },
      },
      handle: async ({ query }, res) => {
        res.json({ charts: await listWatchedCharts(deps.db, query) });
      },
    }),
    defineRoute({
      method: 'put',
      path: '/api/alerts/charts',
      access: ENGINEERS,
      summary: 'Choose whether and how one chart of a station × model is watched (audited)',
      request: { body: watchedChartSettingsSchema },
      responses: { 200: { description: 'The chart as saved', schema: watchedChartViewSchema } },
      handle: async ({ body, caller }, res) => {
        res.json(await setWatchedChart(deps.db, deps.clock, caller.user, body));
      },
    }),
  ];
}
