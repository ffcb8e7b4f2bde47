import { z } from 'zod';
import type { AppDeps } from '#server/deps';
import { defineRoute } from '#server/lib/http';
import { auditEntries, auditTrail } from './audit.service';
import { auditTrailQuerySchema } from '#shared/schemas/audit-trail';
import { auditResponseSchema, type AuditEntry } from '#shared/schemas/audit';

const CSV_HEADER = ['at', 'who', 'action', 'subject_type', 'subject', 'reason', 'before', 'after'];

function csvCell(v: unknown): string {
  if (v === null || v === undefined) return '';
  const s = typeof v === 'string' ? v : JSON.stringify(v);
  // A leading = + - @ would be read as a formula by a spreadsheet.
  const safe = /^[=+\-@]/.test(s) ? `'${s}` : s;
  return /[",\n\r]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

function auditCsv(entries: AuditEntry[]): string {
  const lines = entries.map((e) =>
    [e.at, e.actorName, e.action, e.subjectType, e.subjectLabel ?? e.subjectId, e.reason, e.before, e.after]
      .map(csvCell)
      .join(','),
  );
  return [CSV_HEADER.join(','), ...lines].join('\r\n') + '\r\n';
}

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
    defineRoute({
      method: 'get',
      path: '/api/audit',
      access: ['quality'],
      summary: 'The audit trail of units, investigations and recipes, filtered (quality and admins)',
      request: { query: auditTrailQuerySchema },
      responses: { 200: { description: 'The matching entries, newest first', schema: auditResponseSchema } },
      handle: async ({ query }, res) => {
        res.json({ entries: await auditTrail(deps.db, query) });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/audit.csv',
      access: ['quality'],
      summary: 'The filtered audit trail as CSV',
      request: { query: auditTrailQuerySchema },
      responses: {
        200: { description: 'The matching entries as CSV, newest first', contentType: 'text/csv' },
      },
      handle: async ({ query }, res) => {
        const entries = await auditTrail(deps.readDb, query);
        res.setHeader('Content-Type', 'text/csv; charset=utf-8');
        res.setHeader('Content-Disposition', 'attachment; filename="audit-trail.csv"');
        res.send(auditCsv(entries));
      },
    }),
  ];
}
