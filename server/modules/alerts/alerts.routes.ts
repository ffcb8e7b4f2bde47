import { z } from 'zod';
import type { AppDeps } from '../../deps';
import { route } from '../../lib/http';
import {
  acknowledgeAlertSchema,
  alertListQuerySchema,
  alertSubscriptionSchema,
} from '../../../shared/schemas/alerts';
import { acknowledgeAlert, isSubscribed, listAlerts, setSubscription } from './alerts.service';

const idParams = z.object({ id: z.uuid() });

export function alertsRoutes(deps: AppDeps) {
  return [
    route({
      method: 'get',
      path: '/api/alerts',
      // Every signed-in role may read alerts: operators see their station's on its health panel.
      access: 'signed-in',
      summary: 'Alerts of the watched control charts (open by default; by station)',
      query: alertListQuerySchema,
      handler: async (req, res) => {
        res.json({ alerts: await listAlerts(deps.db, alertListQuerySchema.parse(req.query)) });
      },
    }),
    route({
      method: 'post',
      path: '/api/alerts/:id/acknowledge',
      access: ['engineer'],
      summary: 'Acknowledge an open alert with a comment (audited)',
      body: acknowledgeAlertSchema,
      handler: async (req, res) => {
        const { id } = idParams.parse(req.params);
        const { comment } = acknowledgeAlertSchema.parse(req.body);
        await acknowledgeAlert(deps.db, deps.clock, req.user!, id, comment);
        res.status(204).end();
      },
    }),
    route({
      method: 'get',
      path: '/api/alerts/subscription',
      access: ['engineer', 'quality'],
      summary: 'Whether the signed-in person gets alert e-mails',
      handler: async (req, res) => {
        res.json({ subscribed: await isSubscribed(deps.db, req.user!.id) });
      },
    }),
    route({
      method: 'put',
      path: '/api/alerts/subscription',
      access: ['engineer', 'quality'],
      summary: 'Subscribe to or unsubscribe from alert e-mails',
      body: alertSubscriptionSchema,
      handler: async (req, res) => {
        const { subscribed } = alertSubscriptionSchema.parse(req.body);
        res.json({ subscribed: await setSubscription(deps.db, req.user!, subscribed) });
      },
    }),
  ];
}
