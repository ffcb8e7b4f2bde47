import type { AppDeps } from '../../deps';
import { AppError } from '../../lib/errors';
import { route } from '../../lib/http';
import { outboxResponseSchema } from '../../../shared/schemas/outbox';

export function mailRoutes(deps: AppDeps) {
  return [
    route({
      method: 'get',
      path: '/api/admin/outbox',
      access: ['admin'],
      summary: 'Messages received by the local fake mail server',
      handler: async (_req, res) => {
        if (!deps.env.MAILBOX_URL) {
          throw new AppError(
            409,
            'mail.outbox_unavailable',
            'Mail goes to a real relay (SMTP_URL); there is no local outbox to show.',
          );
        }
        let body: unknown;
        try {
          const r = await fetch(`${deps.env.MAILBOX_URL}/messages`, { signal: AbortSignal.timeout(3000) });
          body = await r.json();
        } catch {
          throw new AppError(503, 'mail.outbox_unreachable', 'The local mail server is not answering.');
        }
        res.json(outboxResponseSchema.parse(body));
      },
    }),
  ];
}
