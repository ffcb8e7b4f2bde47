import { z } from 'zod';
import type { AppDeps } from '../../deps';
import { defineRoute } from '../../lib/http';
import { auditResponseSchema } from '../../../shared/schemas/users';
import { auditEntries } from './audit.service';

const querySchema = z.object({ limit: z.coerce.number().int().min(1).max(1000).default(200) });

export function auditRoutes(deps: AppDeps) {
  return [
    defineRoute({
      method: 'get',
      path: '/api/admin/audit',
      access: ['admin'],
      summary: 'Newest audit log entries',
      responses: { 200: { description: 'The newest entries first', schema: auditResponseSchema } },
      request: { query: querySchema },
      handle: async ({ query }, res) => {
        const { limit } = query;
        res.json({ entries: await auditEntries(deps.db, limit) });
      },
    }),
  ];
}
