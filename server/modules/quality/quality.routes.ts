import { z } from 'zod';
import type { AppDeps } from '#server/deps';
import { defineRoute } from '#server/lib/http';
import type { Access } from '#shared/schemas/roles';
import { serialSchema } from '#shared/schemas/serial';
import {
  bulkHoldSchema,
  commentSchema,
  holdUnitSchema,
  investigationUpdateSchema,
  newInvestigationSchema,
  newSavedSearchSchema,
  releaseSchema,
  savedSearchSchema,
  searchChoicesSchema,
  unitSearchPageSchema,
  unitSearchQuerySchema,
} from '#shared/schemas/quality';
import { bulkHold, heldUnits, type QualityContext } from './quality.service';
import {
  exportSearchCsv,
  measurementAsPosted,
  measurementTrace,
  searchChoices,
  searchUnits,
} from './containment-search.service';
import { releaseUnits } from './releases.service';
import {
  addComment,
  createInvestigation,
  investigationDetail,
  linkUnitsToInvestigation,
  listInvestigations,
  updateInvestigation,
} from './investigations.service';
import { deleteSavedSearch, listSavedSearches, saveSearch } from './saved-searches.service';
import { qualityErrors } from './quality.errors';
import { unitDetail } from '../units/units.service';

const QUALITY = ['quality', 'engineer'] as const satisfies Access;
const serialParams = z.object({ serial: serialSchema });
const idParams = z.object({ id: z.uuid('No such investigation.') });
const savedSearchParams = z.object({ id: z.uuid('No such saved search.') });
const measurementParams = z.object({ measurementId: z.string().trim().min(1).max(100) });
const linkSchema = z.object({ serials: z.array(serialSchema).min(1).max(20000) });

const json = (description: string, schema?: z.ZodType) => ({ description, ...(schema ? { schema } : {}) });
const NOT_FOUND = { description: 'No such investigation' };

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
    defineRoute({
      method: 'get',
      path: '/api/quality/holds',
      access: QUALITY,
      summary: 'Units on hold now, oldest first: age, reason, who, investigation',
      responses: { 200: json('The open holds') },
      handle: async (_input, res) => {
        res.json({ holds: await heldUnits(ctx) });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/quality/holds',
      access: QUALITY,
      summary: 'Hold a selection of units or a whole search result (all or none; safe to repeat)',
      request: { body: bulkHoldSchema },
      responses: {
        200: json('How many units were held, already on hold, or scrapped (left alone)'),
        404: NOT_FOUND,
        409: json('The investigation is closed'),
        422: json('Unknown serials, an empty search, or more units than one hold takes'),
      },
      handle: async ({ body, caller }, res) => {
        res.json(await bulkHold(ctx, caller.user, body));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/quality/releases',
      access: QUALITY,
      summary: 'Release held units with a disposition (use as is, rework, recalibrate, scrap) and a reason',
      request: { body: releaseSchema },
      responses: {
        200: json('The released units and their new state'),
        409: json('A unit is not on hold, was scrapped, or has no pass to use as is (nothing released)'),
        422: json('Unknown serials'),
      },
      handle: async ({ body, caller }, res) => {
        res.json(await releaseUnits(ctx, caller.user, body));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/units/:serial/hold',
      access: QUALITY,
      summary: 'Put one unit on hold, or release it with a disposition, with a reason',
      request: { params: serialParams, body: holdUnitSchema },
      responses: {
        200: json('The unit as it is now'),
        409: json('Already on hold, not on hold, or scrapped'),
        422: json('No such unit'),
      },
      handle: async ({ params: { serial }, body, caller }, res) => {
        if (body.hold) {
          const r = await bulkHold(ctx, caller.user, {
            serials: [serial],
            reason: body.reason,
            investigationId: body.investigationId,
          });
          if (r.held === 0) throw qualityErrors.alreadyHeld();
        } else {
          await releaseUnits(ctx, caller.user, {
            serials: [serial],
            disposition: body.disposition,
            reason: body.reason,
          });
        }
        res.json({ unit: (await unitDetail(deps.db, serial)).unit });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/quality/units',
      access: QUALITY,
      summary: 'Containment search: units by any mix of filters, one page, sorted, with the total',
      request: { query: unitSearchQuerySchema },
      responses: { 200: json('One page of matching units and the total count', unitSearchPageSchema) },
      handle: async ({ query }, res) => {
        res.json(await searchUnits(deps.readDb, query));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/quality/units.csv',
      access: QUALITY,
      summary: 'Containment search: the whole result as CSV (streamed)',
      request: { query: unitSearchQuerySchema },
      responses: { 200: { description: 'Every matching unit, one row each', contentType: 'text/csv' } },
      handle: async ({ query }, res) => {
        res.setHeader('Content-Type', 'text/csv; charset=utf-8');
        res.setHeader('Content-Disposition', 'attachment; filename="containment-search.csv"');
        await exportSearchCsv(deps.readDb, query, (chunk) =>
          res.write(chunk)
            ? undefined
            : new Promise<void>((r) => {
                // A reader that goes away ends the export instead of leaving it waiting.
                res.once('drain', () => r());
                res.once('close', () => r());
              }),
        );
        res.end();
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/quality/search-choices',
      access: QUALITY,
      summary: "The search form's lists: people at the panel, recipe versions, engine versions",
      responses: { 200: json('The lists', searchChoicesSchema) },
      handle: async (_input, res) => {
        res.json(await searchChoices(deps.db));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/quality/saved-searches',
      access: QUALITY,
      summary: 'Containment searches saved under a name, by name',
      responses: {
        200: json('The saved searches', z.object({ savedSearches: z.array(savedSearchSchema) })),
      },
      handle: async ({ caller }, res) => {
        res.json({ savedSearches: await listSavedSearches(ctx, caller.user) });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/quality/saved-searches',
      access: QUALITY,
      summary: 'Save the current search filter under a name (audited)',
      request: { body: newSavedSearchSchema },
      responses: {
        201: json('The saved search', savedSearchSchema),
        409: json('The name is taken'),
        422: json('The filter is empty'),
      },
      handle: async ({ body, caller }, res) => {
        res.status(201).json(await saveSearch(ctx, caller.user, body));
      },
    }),
    defineRoute({
      method: 'delete',
      path: '/api/quality/saved-searches/:id',
      access: QUALITY,
      summary: 'Delete a saved search: the person who saved it, or an administrator (audited)',
      request: { params: savedSearchParams },
      responses: {
        204: { description: 'Deleted' },
        403: json('Saved by someone else'),
        404: json('No such saved search'),
      },
      handle: async ({ params, caller }, res) => {
        await deleteSavedSearch(ctx, caller.user, params.id);
        res.status(204).end();
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/quality/measurements/:measurementId/trace',
      access: QUALITY,
      summary: "A measurement's raw data: crossings, fitted angle and each hall edge's offset",
      request: { params: measurementParams },
      responses: { 200: json('The traced segments and the stored hash'), 404: json('No such measurement') },
      handle: async ({ params }, res) => {
        res.json(await measurementTrace(deps.db, params.measurementId));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/quality/measurements/:measurementId/as-posted',
      access: QUALITY,
      summary: 'A measurement exactly as the station posted it, with the stored SHA-256 in a header',
      request: { params: measurementParams },
      responses: {
        200: {
          description: 'The JSON or capture CSV as posted (X-Stored-Sha256 header)',
          contentType: 'application/json',
        },
        404: json('No such measurement'),
      },
      handle: async ({ params }, res) => {
        const m = await measurementAsPosted(deps.db, params.measurementId);
        res.setHeader('Content-Type', m.contentType);
        res.setHeader('Content-Disposition', `attachment; filename="${m.fileName}"`);
        res.setHeader('X-Stored-Sha256', m.payloadSha256);
        res.send(m.text);
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/quality/investigations',
      access: QUALITY,
      summary: 'Investigations (returns and complaints), newest first',
      responses: { 200: json('The investigations') },
      handle: async (_input, res) => {
        res.json({ investigations: await listInvestigations(ctx) });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/quality/investigations',
      access: QUALITY,
      summary: 'Open an investigation (the quality group is e-mailed)',
      request: { body: newInvestigationSchema },
      responses: { 201: json('The new investigation') },
      handle: async ({ body, caller }, res) => {
        res.status(201).json(await createInvestigation(ctx, caller.user, body));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/quality/investigations/:id',
      access: QUALITY,
      summary: 'One investigation with its linked units and comments',
      request: { params: idParams },
      responses: { 200: json('The investigation'), 404: NOT_FOUND },
      handle: async ({ params }, res) => {
        res.json(await investigationDetail(ctx, params.id));
      },
    }),
    defineRoute({
      method: 'patch',
      path: '/api/quality/investigations/:id',
      access: QUALITY,
      summary: 'Edit an investigation or move it on (open → contained → closed)',
      request: { params: idParams, body: investigationUpdateSchema },
      responses: {
        200: json('The investigation'),
        404: NOT_FOUND,
        409: json('Closed, or a move backwards'),
      },
      handle: async ({ params, body, caller }, res) => {
        res.json(await updateInvestigation(ctx, caller.user, params.id, body));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/quality/investigations/:id/comments',
      access: QUALITY,
      summary: "Add a comment to an investigation's thread",
      request: { params: idParams, body: commentSchema },
      responses: { 201: json('The investigation with the comment'), 404: NOT_FOUND, 409: json('Closed') },
      handle: async ({ params, body, caller }, res) => {
        res.status(201).json(await addComment(ctx, caller.user, params.id, body.body));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/quality/investigations/:id/units',
      access: QUALITY,
      summary: 'Link units to an investigation without holding them',
      request: { params: idParams, body: linkSchema },
      responses: { 200: json('The investigation'), 404: NOT_FOUND, 422: json('Unknown serials') },
      handle: async ({ params, body, caller }, res) => {
        res.json(await linkUnitsToInvestigation(ctx, caller.user, params.id, body.serials));
      },
    }),
  ];
}
