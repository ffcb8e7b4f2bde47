import { z } from 'zod';
import type { AppDeps } from '../../deps';
import { route } from '../../lib/http';
import { serialSchema } from '../../../shared/schemas/serial';
import {
  bulkHoldSchema,
  commentSchema,
  holdUnitSchema,
  investigationUpdateSchema,
  newInvestigationSchema,
  releaseSchema,
  unitSearchQuerySchema,
} from '../../../shared/schemas/quality';
import {
  bulkHold,
  exportSearchCsv,
  heldUnits,
  measurementAsPosted,
  measurementTrace,
  releaseUnits,
  searchUnits,
  type QualityContext,
} from './quality.service';
import {
  addComment,
  createInvestigation,
  investigationDetail,
  linkUnitsToInvestigation,
  listInvestigations,
  updateInvestigation,
} from './investigations.service';
import { qualityErrors } from './quality.errors';
import { unitDetail } from '../units/units.service';

const QUALITY = ['quality', 'engineer'] as const;
const serialParams = z.object({ serial: serialSchema });
const idParams = z.object({ id: z.uuid('No such investigation.') });
const measurementParams = z.object({ measurementId: z.string().trim().min(1).max(100) });
const linkSchema = z.object({ serials: z.array(serialSchema).min(1).max(20000) });

export function qualityContext(deps: AppDeps): QualityContext {
  return {
    db: deps.db,
    clock: deps.clock,
    mailer: deps.mailer,
    logger: deps.logger,
    publicUrl: deps.env.PUBLIC_URL,
  };
}

export function qualityRoutes(deps: AppDeps) {
  const ctx = qualityContext(deps);
  return [
    route({
      method: 'get',
      path: '/api/quality/holds',
      access: QUALITY,
      summary: 'Units on hold now, oldest first: age, reason, who, investigation',
      handler: async (_req, res) => {
        res.json({ holds: await heldUnits(ctx) });
      },
    }),
    route({
      method: 'post',
      path: '/api/quality/holds',
      access: QUALITY,
      summary: 'Hold a selection of units or a whole search result (all or none; safe to repeat)',
      body: bulkHoldSchema,
      handler: async (req, res) => {
        res.json(await bulkHold(ctx, req.user!, bulkHoldSchema.parse(req.body)));
      },
    }),
    route({
      method: 'post',
      path: '/api/quality/releases',
      access: QUALITY,
      summary: 'Release held units with a disposition (use as is, rework, recalibrate, scrap) and a reason',
      body: releaseSchema,
      handler: async (req, res) => {
        res.json(await releaseUnits(ctx, req.user!, releaseSchema.parse(req.body)));
      },
    }),
    route({
      method: 'post',
      path: '/api/units/:serial/hold',
      access: QUALITY,
      summary: 'Put one unit on hold, or release it with a disposition, with a reason',
      body: holdUnitSchema,
      handler: async (req, res) => {
        const { serial } = serialParams.parse(req.params);
        const body = holdUnitSchema.parse(req.body);
        if (body.hold) {
          const r = await bulkHold(ctx, req.user!, {
            serials: [serial],
            reason: body.reason,
            investigationId: body.investigationId,
          });
          if (r.held === 0) throw qualityErrors.alreadyHeld();
        } else {
          await releaseUnits(ctx, req.user!, {
            serials: [serial],
            disposition: body.disposition,
            reason: body.reason,
          });
        }
        res.json({ unit: (await unitDetail(deps.db, serial)).unit });
      },
    }),
    route({
      method: 'get',
      path: '/api/quality/units',
      access: QUALITY,
      summary: 'Containment search: units by any mix of filters, one page, sorted, with the total',
      query: unitSearchQuerySchema,
      handler: async (req, res) => {
        res.json(await searchUnits(deps.db, unitSearchQuerySchema.parse(req.query)));
      },
    }),
    route({
      method: 'get',
      path: '/api/quality/units.csv',
      access: QUALITY,
      summary: 'Containment search: the whole result as CSV (streamed)',
      query: unitSearchQuerySchema,
      handler: async (req, res) => {
        const q = unitSearchQuerySchema.parse(req.query);
        res.setHeader('Content-Type', 'text/csv; charset=utf-8');
        res.setHeader('Content-Disposition', 'attachment; filename="containment-search.csv"');
        await exportSearchCsv(deps.db, q, (chunk) =>
          res.write(chunk) ? undefined : new Promise<void>((r) => res.once('drain', () => r())),
        );
        res.end();
      },
    }),
    route({
      method: 'get',
      path: '/api/quality/measurements/:measurementId/trace',
      access: QUALITY,
      summary: "A measurement's raw data: crossings, fitted angle and each hall edge's offset",
      handler: async (req, res) => {
        res.json(await measurementTrace(deps.db, measurementParams.parse(req.params).measurementId));
      },
    }),
    route({
      method: 'get',
      path: '/api/quality/measurements/:measurementId/as-posted',
      access: QUALITY,
      summary: 'A measurement exactly as the station posted it, with the stored SHA-256 in a header',
      handler: async (req, res) => {
        const m = await measurementAsPosted(deps.db, measurementParams.parse(req.params).measurementId);
        res.setHeader('Content-Type', m.contentType);
        res.setHeader('Content-Disposition', `attachment; filename="${m.fileName}"`);
        res.setHeader('X-Stored-Sha256', m.payloadSha256);
        res.send(m.text);
      },
    }),
    route({
      method: 'get',
      path: '/api/quality/investigations',
      access: QUALITY,
      summary: 'Investigations (returns and complaints), newest first',
      handler: async (_req, res) => {
        res.json({ investigations: await listInvestigations(ctx) });
      },
    }),
    route({
      method: 'post',
      path: '/api/quality/investigations',
      access: QUALITY,
      summary: 'Open an investigation (the quality group is e-mailed)',
      body: newInvestigationSchema,
      handler: async (req, res) => {
        res
          .status(201)
          .json(await createInvestigation(ctx, req.user!, newInvestigationSchema.parse(req.body)));
      },
    }),
    route({
      method: 'get',
      path: '/api/quality/investigations/:id',
      access: QUALITY,
      summary: 'One investigation with its linked units and comments',
      handler: async (req, res) => {
        res.json(await investigationDetail(ctx, idParams.parse(req.params).id));
      },
    }),
    route({
      method: 'patch',
      path: '/api/quality/investigations/:id',
      access: QUALITY,
      summary: 'Edit an investigation or move it on (open → contained → closed)',
      body: investigationUpdateSchema,
      handler: async (req, res) => {
        const { id } = idParams.parse(req.params);
        res.json(await updateInvestigation(ctx, req.user!, id, investigationUpdateSchema.parse(req.body)));
      },
    }),
    route({
      method: 'post',
      path: '/api/quality/investigations/:id/comments',
      access: QUALITY,
      summary: "Add a comment to an investigation's thread",
      body: commentSchema,
      handler: async (req, res) => {
        const { id } = idParams.parse(req.params);
        res.status(201).json(await addComment(ctx, req.user!, id, commentSchema.parse(req.body).body));
      },
    }),
    route({
      method: 'post',
      path: '/api/quality/investigations/:id/units',
      access: QUALITY,
      summary: 'Link units to an investigation without holding them',
      body: linkSchema,
      handler: async (req, res) => {
        const { id } = idParams.parse(req.params);
        res.json(await linkUnitsToInvestigation(ctx, req.user!, id, linkSchema.parse(req.body).serials));
      },
    }),
  ];
}
