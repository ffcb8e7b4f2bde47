import type { AppDeps } from '#server/deps';
import { mailErrors } from './mail.errors';
import { defineRoute } from '#server/lib/http';
import { outboxResponseSchema } from '#shared/schemas/outbox';

export function mailRoutes(deps: AppDeps) {
  return [
    defineRoute({
      method: 'get',
      path: '/api/admin/outbox',
      access: ['admin'],
      summary: 'Messages received by the local fake mail server',
      responses: {
        200: {
          description: 'The messages, as the fake mail server keeps them',
          schema: outboxResponseSchema,
        },
      },
      handle: async (_input, res) => {
        if (!deps.env.MAILBOX_URL) {
          throw mailErrors.outboxUnavailable();
        }
        let body: unknown;
        try {
          const r = await fetch(`${deps.env.MAILBOX_URL}/messages`, { signal: AbortSignal.timeout(3000) });
          body = await r.json();
        } catch {
          throw mailErrors.outboxUnreachable();
        }
        res.json(outboxResponseSchema.parse(body));
      },
    }),
  ];
}
