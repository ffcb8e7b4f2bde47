import { z } from 'zod';
import type { AppDeps } from '#server/deps';
import { defineRoute } from '#server/lib/http';
import type { Access } from '#shared/schemas/roles';
import {
  approveSchema,
  createDraftSchema,
  discardDraftSchema,
  modelInputSchema,
  saveDraftSchema,
  sendBackSchema,
  startWhatIfSchema,
  submitDraftSchema,
  whatIfFiltersSchema,
  modelDetailViewSchema,
  modelSummaryViewSchema,
  recipeDiffSchema,
  recipeVersionViewSchema,
  whatIfRunViewSchema,
} from '#shared/schemas/recipes';
import { cancelWhatIf, getWhatIf, listWhatIfs, startWhatIf } from './what-if.service';
import {
  approveVersion,
  createDraft,
  createModel,
  diffVersions,
  discardDraft,
  getVersion,
  listModels,
  modelDetail,
  saveDraft,
  sendBackVersion,
  submitDraft,
  updateModel,
  type RecipeDeskContext,
} from './recipes.service';

const modelParams = z.object({ id: z.string().uuid('Not a model id') });
const recipeParams = z.object({ id: z.string().uuid('Not a recipe version id') });
const runParams = z.object({ id: z.string().uuid('Not a what-if run id') });
const diffQuery = z.object({ against: z.string().uuid('Name the version to compare with (against=<id>).') });

const modelsResponse = z.object({ models: z.array(modelSummaryViewSchema) });
const recipeSettingsResponse = z.object({ singlePersonRelease: z.boolean() });
const whatIfRunsResponse = z.object({ runs: z.array(whatIfRunViewSchema) });

/** Recipes are the process engineers' trade: they change them; everyone signed in reads them. */
const ENGINEERS_ONLY = { only: ['engineer'] } as const satisfies Access;

export function recipeDeskContext(deps: AppDeps): RecipeDeskContext {
  return {
    db: deps.db,
    clock: deps.clock,
    mailer: deps.mailer,
    logger: deps.logger,
    publicUrl: deps.env.PUBLIC_URL,
    singlePersonRelease: deps.env.RECIPE_SINGLE_PERSON_RELEASE,
  };
}

export function recipesRoutes(deps: AppDeps) {
  const ctx = recipeDeskContext(deps);
  const whatIf = { db: deps.db, pool: deps.pool, queue: deps.queue, clock: deps.clock };
  return [
    defineRoute({
      method: 'get',
      path: '/api/models',
      access: 'signed-in',
      summary: 'Motor models with the recipe version in force, stations, units built and first-pass yield',
      responses: { 200: { description: 'Every model, by code', schema: modelsResponse } },
      handle: async (_input, res) => {
        res.json({ models: await listModels(ctx) });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/models',
      access: ENGINEERS_ONLY,
      summary: 'Create a motor model (audited with a reason)',
      request: { body: modelInputSchema },
      responses: { 201: { description: 'The new model with its versions', schema: modelDetailViewSchema } },
      handle: async ({ body, caller }, res) => {
        res.status(201).json(await createModel(ctx, caller.user, body));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/models/:id',
      access: 'signed-in',
      summary: 'One model with all its recipe versions',
      request: { params: modelParams },
      responses: { 200: { description: 'The model with its versions', schema: modelDetailViewSchema } },
      handle: async ({ params }, res) => {
        res.json(await modelDetail(ctx, params.id));
      },
    }),
    defineRoute({
      method: 'patch',
      path: '/api/models/:id',
      access: ENGINEERS_ONLY,
      summary: 'Change a model: code, name, pole pairs (audited with before, after and a reason)',
      request: { params: modelParams, body: modelInputSchema },
      responses: {
        200: { description: 'The changed model with its versions', schema: modelDetailViewSchema },
      },
      handle: async ({ params, body, caller }, res) => {
        res.json(await updateModel(ctx, caller.user, params.id, body));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/models/:id/recipes',
      access: ENGINEERS_ONLY,
      summary: 'Create a draft recipe version by copying any version of the model',
      request: { params: modelParams, body: createDraftSchema },
      responses: { 201: { description: 'The new draft', schema: recipeVersionViewSchema } },
      handle: async ({ params, body, caller }, res) => {
        res.status(201).json(await createDraft(ctx, caller.user, params.id, body));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/recipe-settings',
      access: 'signed-in',
      summary: "The plant's release rule: two people (default) or one",
      responses: { 200: { description: 'The release rule', schema: recipeSettingsResponse } },
      handle: (_input, res) => {
        res.json({ singlePersonRelease: ctx.singlePersonRelease });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/recipes/:id',
      access: 'signed-in',
      summary: 'One recipe version',
      request: { params: recipeParams },
      responses: { 200: { description: 'The version', schema: recipeVersionViewSchema } },
      handle: async ({ params }, res) => {
        res.json(await getVersion(ctx, params.id));
      },
    }),
    defineRoute({
      method: 'patch',
      path: '/api/recipes/:id',
      access: ENGINEERS_ONLY,
      summary: 'Save a draft (optimistic: 409 when someone saved it since the given revision)',
      request: { params: recipeParams, body: saveDraftSchema },
      responses: { 200: { description: 'The saved draft', schema: recipeVersionViewSchema } },
      handle: async ({ params, body, caller }, res) => {
        res.json(await saveDraft(ctx, caller.user, params.id, body));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/recipes/:id/diff',
      access: 'signed-in',
      summary: 'Field-by-field differences from another version (against) to this one',
      request: { params: recipeParams, query: diffQuery },
      responses: { 200: { description: 'The changed fields, in recipe order', schema: recipeDiffSchema } },
      handle: async ({ params, query }, res) => {
        res.json(await diffVersions(ctx, query.against, params.id));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/recipes/:id/submit',
      access: ENGINEERS_ONLY,
      summary: 'Submit a draft for review with a change reason (the other engineers get an e-mail)',
      request: { params: recipeParams, body: submitDraftSchema },
      responses: { 200: { description: 'The version, now in review', schema: recipeVersionViewSchema } },
      handle: async ({ params, body, caller }, res) => {
        res.json(await submitDraft(ctx, caller.user, params.id, body));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/recipes/:id/discard',
      access: ENGINEERS_ONLY,
      summary: 'Discard a draft with a reason (audited; the record stays, it leaves the working list)',
      request: { params: recipeParams, body: discardDraftSchema },
      responses: { 200: { description: 'The discarded draft', schema: recipeVersionViewSchema } },
      handle: async ({ params, body, caller }, res) => {
        res.json(await discardDraft(ctx, caller.user, params.id, body));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/recipes/:id/approve',
      access: ENGINEERS_ONLY,
      summary: 'Approve a version in review: it is released and in force for new measurements from now',
      request: { params: recipeParams, body: approveSchema },
      responses: {
        200: {
          description: 'The version, now released (or still in review)',
          schema: recipeVersionViewSchema,
        },
      },
      handle: async ({ params, body, caller }, res) => {
        res.json(await approveVersion(ctx, caller.user, params.id, body));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/recipes/:id/send-back',
      access: ENGINEERS_ONLY,
      summary: 'Send a version in review back to draft with a comment',
      request: { params: recipeParams, body: sendBackSchema },
      responses: { 200: { description: 'The version, back to draft', schema: recipeVersionViewSchema } },
      handle: async ({ params, body, caller }, res) => {
        res.json(await sendBackVersion(ctx, caller.user, params.id, body));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/recipes/:id/what-if',
      access: ENGINEERS_ONLY,
      summary:
        "Run this version over past units' stored measurements (analysis only; default: the last 1,000 units)",
      request: { params: recipeParams, body: startWhatIfSchema },
      responses: { 202: { description: 'The queued run', schema: whatIfRunViewSchema } },
      handle: async ({ params, body, caller }, res) => {
        res
          .status(202)
          .json(
            await startWhatIf(whatIf, caller.user, params.id, body.filters ?? whatIfFiltersSchema.parse({})),
          );
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/recipes/:id/what-if',
      access: 'signed-in',
      summary: 'The what-if runs of this version, newest first',
      request: { params: recipeParams },
      responses: { 200: { description: 'The runs, newest first', schema: whatIfRunsResponse } },
      handle: async ({ params }, res) => {
        res.json({ runs: await listWhatIfs(whatIf, params.id) });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/what-if/:id',
      access: 'signed-in',
      summary: 'One what-if run: progress, and its results once done',
      request: { params: runParams },
      responses: { 200: { description: 'The run', schema: whatIfRunViewSchema } },
      handle: async ({ params }, res) => {
        res.json(await getWhatIf(whatIf, params.id));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/what-if/:id/cancel',
      access: ENGINEERS_ONLY,
      summary: 'Stop a queued or running what-if run',
      request: { params: runParams },
      responses: { 200: { description: 'The run, asked to stop', schema: whatIfRunViewSchema } },
      handle: async ({ params }, res) => {
        res.json(await cancelWhatIf(whatIf, params.id));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/what-if/:id/events',
      access: 'signed-in',
      summary: 'Server-Sent Events: progress of one what-if run until it ends',
      request: { params: runParams },
      responses: {
        200: { description: 'An event stream of `progress` events', contentType: 'text/event-stream' },
      },
      handle: async ({ params: { id } }, res, req) => {
        // Subscribe first, then read: a step that happens in between is still seen.
        const send = (event: string, data: unknown) =>
          res.write(`event: ${event}\ndata: ${JSON.stringify(data)}\n\n`);
        const buffered: unknown[] = [];
        let ready = false;
        const unsubscribe = deps.events.subscribeWhatIf((e) => {
          if (e.runId !== id) return;
          if (!ready) return void buffered.push(e);
          send('progress', e);
        });
        let run;
        try {
          run = await getWhatIf(whatIf, id);
        } catch (e) {
          unsubscribe();
          throw e;
        }
        res.writeHead(200, {
          'content-type': 'text/event-stream; charset=utf-8',
          'cache-control': 'no-cache, no-transform',
          connection: 'keep-alive',
          'x-accel-buffering': 'no',
        });
        res.write('retry: 2000\n\n');
        send('progress', {
          type: 'whatif.progress',
          runId: run.id,
          status: run.status,
          processed: run.processed,
          total: run.total,
          at: deps.clock().toISOString(),
        });
        ready = true;
        for (const e of buffered) send('progress', e);
        const keepAlive = setInterval(() => res.write(': keep-alive\n\n'), 15_000);
        req.on('close', () => {
          clearInterval(keepAlive);
          unsubscribe();
        });
      },
    }),
  ];
}
