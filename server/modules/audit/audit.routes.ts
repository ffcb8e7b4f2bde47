import { z } from 'zod';
import type { AppDeps } from '../../deps';
import { route } from '../../lib/http';
import { auditEntries } from './audit.service';

const querySchema = z.object({ limit: z.coerce.number().int().min(1).max(1000).default(200) });

export function auditRoutes(deps: AppDeps) {
  return [
    route({
      method: 'get',
      path: '/api/admin/audit',
      access: ['admin'],
      summary: 'Newest audit log entries',
      handler: async (req, res) => {
        const { limit } = querySchema.parse(req.query);
        res.json({ entries: await auditEntries(deps.db, limit) });
      },
    }),
  ];
}
