// Over ~350 lines on purpose: the life of a recipe version (draft → review → released → retired, discard)
// with its audit and mail is one set of rules; the queries are in recipes.repository.ts.
import type { Db } from '#server/db/client';
import type { SessionUser } from '#server/lib/auth';
import type { Logger } from '#server/lib/logger';
import type { Mailer } from '../mail/mail.service';
import { insertAudit } from '../audit/audit.repository';
import { listUsers } from '../users/users.repository';
import { countUnitsByModel } from '../units/units.service';
import { listStationsAllowingModels } from '../stations/stations.service';
import { firstPassYieldByModel } from '../read-models/first-pass-yield.repository';
import { recipeSchema, type Recipe } from '#shared/schemas/recipe';
import { diffRecipes, hallLayoutLabel, type RecipeFieldChange } from '#shared/recipe/recipe-fields';
import type {
  ModelDetailView,
  ModelInput,
  ModelSummaryView,
  PersonRef,
  RecipeVersionView,
} from '#shared/schemas/recipes';
import { recipeErrors } from './recipes.errors';
import * as repo from './recipes.repository';
import type { ModelRecord, RecipeRecord } from './recipes.table';

export interface RecipeDeskContext {
  db: Db;
  clock: () => Date;
  mailer: Mailer;
  logger: Logger;
  publicUrl: string;
  /** Plant setting: one engineer may submit and approve their own draft (small plants). */
  singlePersonRelease: boolean;
}

const DAY_MS = 86_400_000;

type People = Map<string, PersonRef & { email: string | null; role: string; active: boolean }>;

async function people(db: Db): Promise<People> {
  const rows = await listUsers(db);
  return new Map(
    rows.map((u) => [
      u.id,
      { id: u.id, displayName: u.displayName, email: u.email, role: u.role, active: !u.disabled },
    ]),
  );
}

function ref(p: People, id: string | null): PersonRef | null {
  if (!id) return null;
  const u = p.get(id);
  return u ? { id: u.id, displayName: u.displayName } : { id, displayName: 'unknown person' };
}

const iso = (d: Date | null) => (d ? d.toISOString() : null);

export function versionView(
  r: RecipeRecord,
  model: ModelRecord,
  all: RecipeRecord[],
  p: People,
): RecipeVersionView {
  const versionOf = (id: string | null) => {
    const x = id ? all.find((a) => a.id === id) : undefined;
    return x ? { id: x.id, version: x.version } : null;
  };
  return {
    id: r.id,
    modelId: r.modelId,
    modelCode: model.code,
    version: r.version,
    status: r.status,
    body: r.body,
    notes: r.notes,
    revision: r.revision,
    basedOn: versionOf(r.basedOnId),
    createdBy: ref(p, r.createdBy),
    createdAt: r.createdAt.toISOString(),
    updatedBy: ref(p, r.updatedBy),
    updatedAt: iso(r.updatedAt),
    changeReason: r.changeReason,
    submittedBy: ref(p, r.submittedBy),
    submittedAt: iso(r.submittedAt),
    reviewComment: r.reviewComment,
    releasedBy: ref(p, r.releasedBy),
    releasedAt: iso(r.releasedAt),
    retiredAt: iso(r.retiredAt),
    releaseDiff: r.releaseDiff,
    replaces: versionOf(r.replacesId),
    discardedBy: ref(p, r.discardedBy),
    discardedAt: iso(r.discardedAt),
    discardReason: r.discardReason,
  };
}

async function summaries(db: Db, clock: () => Date, rows: ModelRecord[]): Promise<ModelSummaryView[]> {
  const [built, fpy, stationRows, recipeRows] = await Promise.all([
    countUnitsByModel(db),
    firstPassYieldByModel(db, new Date(clock().getTime() - 7 * DAY_MS)),
    listStationsAllowingModels(db),
    repo.listRecipeRows(db),
  ]);
  return rows.map((m) => {
    const active = recipeRows.find((r) => r.id === m.activeRecipeId);
    const y = fpy.get(m.id) ?? { firstMeasured: 0, passedFirst: 0 };
    return {
      id: m.id,
      code: m.code,
      name: m.name,
      polePairs: m.polePairs,
      activeRecipe: active
        ? { id: active.id, version: active.version, name: active.body.name ?? null, body: active.body }
        : null,
      hallLayout: active ? hallLayoutLabel(active.body.hallRiseDeg) : null,
      countsPerTurn: active?.body.countsPerTurn ?? null,
      stations: stationRows
        .filter((s) => s.allowedModelIds.includes(m.id))
        .map((s) => ({ id: s.id, name: s.name })),
      unitsBuilt: built.get(m.id) ?? 0,
      firstPassYield7d: {
        ...y,
        pct: y.firstMeasured ? Math.round((1000 * y.passedFirst) / y.firstMeasured) / 10 : null,
      },
    };
  });
}

export async function listModels(ctx: Pick<RecipeDeskContext, 'db' | 'clock'>): Promise<ModelSummaryView[]> {
  return summaries(ctx.db, ctx.clock, await repo.listModelRows(ctx.db));
}

export async function modelDetail(
  ctx: Pick<RecipeDeskContext, 'db' | 'clock'>,
  modelId: string,
): Promise<ModelDetailView> {
  const model = await repo.findModelRow(ctx.db, modelId);
  if (!model) throw recipeErrors.modelNotFound();
  const [[summary], versions, p] = await Promise.all([
    summaries(ctx.db, ctx.clock, [model]),
    repo.listRecipeRows(ctx.db, modelId),
    people(ctx.db),
  ]);
  const views = versions.map((v) => versionView(v, model, versions, p));
  return {
    ...summary,
    versions: views.filter((v) => v.status !== 'discarded'),
    discarded: views.filter((v) => v.status === 'discarded'),
  };
}

const modelAudit = (m: ModelRecord) => ({ code: m.code, name: m.name, polePairs: m.polePairs });

export async function createModel(ctx: RecipeDeskContext, actor: SessionUser, input: ModelInput) {
  if (await repo.modelCodeTaken(ctx.db, input.code)) throw recipeErrors.codeTaken(input.code);
  const model = await ctx.db.transaction(async (tx) => {
    const row = await repo.insertModelRow(tx, {
      code: input.code,
      name: input.name,
      polePairs: input.polePairs,
    });
    await insertAudit(tx, {
      actorId: actor.id,
      action: 'models.created',
      subjectType: 'model',
      subjectId: row.id,
      reason: input.reason,
      after: modelAudit(row),
    });
    return row;
  });
  return modelDetail(ctx, model.id);
}

export async function updateModel(
  ctx: RecipeDeskContext,
  actor: SessionUser,
  modelId: string,
  input: ModelInput,
) {
  const before = await repo.findModelRow(ctx.db, modelId);
  if (!before) throw recipeErrors.modelNotFound();
  if (await repo.modelCodeTaken(ctx.db, input.code, modelId)) throw recipeErrors.codeTaken(input.code);
  if (input.polePairs !== before.polePairs) {
    const built = (await countUnitsByModel(ctx.db)).get(modelId) ?? 0;
    if (built > 0) throw recipeErrors.polePairsLocked(before.code, built);
  }
  await ctx.db.transaction(async (tx) => {
    const after = await repo.updateModelRow(tx, modelId, {
      code: input.code,
      name: input.name,
      polePairs: input.polePairs,
    });
    await insertAudit(tx, {
      actorId: actor.id,
      action: 'models.changed',
      subjectType: 'model',
      subjectId: modelId,
      reason: input.reason,
      before: modelAudit(before),
      after: modelAudit(after),
    });
  });
  return modelDetail(ctx, modelId);
}

async function versionViewById(db: Db, id: string): Promise<RecipeVersionView> {
  const r = await repo.findRecipeRow(db, id);
  if (!r) throw recipeErrors.notFound();
  const [model, all, p] = await Promise.all([
    repo.findModelRow(db, r.modelId),
    repo.listRecipeRows(db, r.modelId),
    people(db),
  ]);
  return versionView(r, model!, all, p);
}

export async function getVersion(ctx: Pick<RecipeDeskContext, 'db'>, id: string) {
  return versionViewById(ctx.db, id);
}

/** A new draft of the model, copied from any of its versions. */
export async function createDraft(
  ctx: RecipeDeskContext,
  actor: SessionUser,
  modelId: string,
  input: { fromRecipeId: string; notes?: string },
) {
  const from = await repo.findRecipeRow(ctx.db, input.fromRecipeId);
  if (!from) throw recipeErrors.notFound();
  if (from.modelId !== modelId) throw recipeErrors.otherModel();
  const created = await ctx.db.transaction(async (tx) => {
    const model = await repo.lockModelRow(tx, modelId);
    if (!model) throw recipeErrors.modelNotFound();
    const row = await repo.insertRecipeRow(tx, {
      modelId,
      version: await repo.nextRecipeVersion(tx, modelId),
      status: 'draft',
      body: from.body,
      notes: input.notes ?? null,
      basedOnId: from.id,
      createdBy: actor.id,
      createdAt: ctx.clock(),
    });
    await insertAudit(tx, {
      actorId: actor.id,
      action: 'recipes.draft_created',
      subjectType: 'recipe',
      subjectId: row.id,
      after: { model: model.code, version: row.version, copiedFromVersion: from.version },
    });
    return row;
  });
  return versionViewById(ctx.db, created.id);
}

/** The recipe version, refused unless it is still a draft (saved, discarded and submitted only then). */
async function findDraft(ctx: RecipeDeskContext, id: string) {
  const row = await repo.findRecipeRow(ctx.db, id);
  if (!row) throw recipeErrors.notFound();
  if (row.status !== 'draft') throw recipeErrors.notADraft(row.version, statusWords(row.status));
  return row;
}

/** The 409 for a save or submit that lost a race, naming who changed the version and when. */
async function lostRace(db: Db, id: string, expectedStatus: RecipeRecord['status']): Promise<never> {
  const now = await repo.findRecipeRow(db, id);
  if (!now) throw recipeErrors.notFound();
  if (now.status !== expectedStatus) {
    throw expectedStatus === 'draft'
      ? recipeErrors.notADraft(now.version, statusWords(now.status))
      : recipeErrors.notInReview(now.version, statusWords(now.status));
  }
  const p = await people(db);
  const who = ref(p, now.updatedBy ?? now.createdBy)?.displayName ?? 'someone';
  throw recipeErrors.changedMeanwhile(now.version, who, now.updatedAt ?? now.createdAt, now.revision);
}

function statusWords(s: RecipeRecord['status']): string {
  return {
    draft: 'a draft',
    in_review: 'in review',
    released: 'released (in force)',
    retired: 'retired',
    discarded: 'discarded',
  }[s];
}

export async function saveDraft(
  ctx: RecipeDeskContext,
  actor: SessionUser,
  id: string,
  input: { body: Recipe; notes?: string | null; revision: number },
) {
  const before = await findDraft(ctx, id);
  const model = await repo.findModelRow(ctx.db, before.modelId);
  if (input.body.polePairs !== model!.polePairs) throw recipeErrors.polePairsMismatch(model!.polePairs);
  const body = recipeSchema.parse(input.body);
  await ctx.db.transaction(async (tx) => {
    const after = await repo.updateRecipeRowIf(
      tx,
      id,
      { status: 'draft', revision: input.revision },
      {
        body,
        notes: input.notes === undefined ? before.notes : input.notes,
        revision: input.revision + 1,
        updatedBy: actor.id,
        updatedAt: ctx.clock(),
      },
    );
    if (!after) return lostRace(ctx.db, id, 'draft');
    await insertAudit(tx, {
      actorId: actor.id,
      action: 'recipes.draft_saved',
      subjectType: 'recipe',
      subjectId: id,
      before: { revision: before.revision, changes: diffRecipes(before.body, body) },
      after: { revision: after.revision, body },
    });
  });
  return versionViewById(ctx.db, id);
}

/**
 * An engineer (the author or another) discards a draft with a reason. The row stays with who, when
 * and why; it leaves the model's working list and can no longer be saved, submitted or approved.
 */
export async function discardDraft(
  ctx: RecipeDeskContext,
  actor: SessionUser,
  id: string,
  input: { reason: string; revision: number },
) {
  const before = await findDraft(ctx, id);
  await ctx.db.transaction(async (tx) => {
    const now = ctx.clock();
    const after = await repo.updateRecipeRowIf(
      tx,
      id,
      { status: 'draft', revision: input.revision },
      {
        status: 'discarded',
        discardedBy: actor.id,
        discardedAt: now,
        discardReason: input.reason,
        revision: input.revision + 1,
      },
    );
    if (!after) return lostRace(ctx.db, id, 'draft');
    await insertAudit(tx, {
      actorId: actor.id,
      action: 'recipes.draft_discarded',
      subjectType: 'recipe',
      subjectId: id,
      reason: input.reason,
      before: { status: 'draft', revision: before.revision },
      after: { status: 'discarded', revision: after.revision, discardedAt: now.toISOString() },
    });
  });
  return versionViewById(ctx.db, id);
}

/** The author sends the draft for review with a reason; the other engineers get an e-mail. */
export async function submitDraft(
  ctx: RecipeDeskContext,
  actor: SessionUser,
  id: string,
  input: { reason: string; revision: number },
) {
  const before = await findDraft(ctx, id);
  const model = (await repo.findModelRow(ctx.db, before.modelId))!;
  const inForce = model.activeRecipeId ? await repo.findRecipeRow(ctx.db, model.activeRecipeId) : undefined;
  const changes = inForce ? diffRecipes(inForce.body, before.body) : [];
  await ctx.db.transaction(async (tx) => {
    const after = await repo.updateRecipeRowIf(
      tx,
      id,
      { status: 'draft', revision: input.revision },
      {
        status: 'in_review',
        changeReason: input.reason,
        submittedBy: actor.id,
        submittedAt: ctx.clock(),
        reviewComment: null,
        revision: input.revision + 1,
      },
    );
    if (!after) return lostRace(ctx.db, id, 'draft');
    await insertAudit(tx, {
      actorId: actor.id,
      action: 'recipes.submitted',
      subjectType: 'recipe',
      subjectId: id,
      reason: input.reason,
      before: { status: 'draft' },
      after: { status: 'in_review', changesAgainstVersionInForce: changes },
    });
  });
  const p = await people(ctx.db);
  const reviewers = [...p.values()].filter(
    (u) => u.role === 'engineer' && u.active && u.email && (ctx.singlePersonRelease || u.id !== actor.id),
  );
  const link = `${ctx.publicUrl}/recipes/versions/${id}/review`;
  for (const r of reviewers) {
    // The submission stands even if a mail cannot be sent; the review screen lists it either way.
    await ctx.mailer
      .send({
        to: r.email!,
        subject: `Recipe review: ${model.code} version ${before.version}`,
        text: [
          `Hello ${r.displayName},`,
          '',
          `${actor.displayName} asks you to review recipe version ${before.version} of ${model.code}.`,
          `Reason: ${input.reason}`,
          `${changes.length} field(s) differ from the version in force${inForce ? ` (version ${inForce.version})` : ''}.`,
          '',
          `Review it here: ${link}`,
        ].join('\n'),
      })
      .catch((e: unknown) => ctx.logger.warn({ err: e, to: r.email }, 'recipe review mail not sent'));
  }
  return versionViewById(ctx.db, id);
}

function mayReview(ctx: RecipeDeskContext, actor: SessionUser, r: RecipeRecord): boolean {
  return ctx.singlePersonRelease || (actor.id !== r.submittedBy && actor.id !== r.createdBy);
}

/**
 * A second engineer approves: the version is released and in force from now on; the previous
 * version in force is retired for new measurements (stored calibrations keep pointing at it).
 * The field-by-field diff against the replaced version is stored with the release.
 */
export async function approveVersion(
  ctx: RecipeDeskContext,
  actor: SessionUser,
  id: string,
  input: { comment?: string },
) {
  const r = await repo.findRecipeRow(ctx.db, id);
  if (!r) throw recipeErrors.notFound();
  if (r.status !== 'in_review') throw recipeErrors.notInReview(r.version, statusWords(r.status));
  if (!mayReview(ctx, actor, r)) throw recipeErrors.ownDraft();
  await ctx.db.transaction(async (tx) => {
    const model = (await repo.lockModelRow(tx, r.modelId))!;
    const now = ctx.clock();
    const previous = model.activeRecipeId ? await repo.findRecipeRow(tx, model.activeRecipeId) : undefined;
    if (previous) {
      const retired = await repo.updateRecipeRowIf(
        tx,
        previous.id,
        { status: 'released' },
        { status: 'retired', retiredAt: now },
      );
      if (!retired)
        throw new Error(`version in force ${previous.id} of model ${model.code} was not released`);
    }
    const releaseDiff: RecipeFieldChange[] = previous ? diffRecipes(previous.body, r.body) : [];
    const released = await repo.updateRecipeRowIf(
      tx,
      id,
      { status: 'in_review', revision: r.revision },
      {
        status: 'released',
        releasedBy: actor.id,
        releasedAt: now,
        reviewComment: input.comment ?? null,
        releaseDiff,
        replacesId: previous?.id ?? null,
      },
    );
    if (!released) return lostRace(ctx.db, id, 'in_review');
    await repo.updateModelRow(tx, model.id, { activeRecipeId: id });
    await insertAudit(tx, {
      actorId: actor.id,
      action: 'recipes.released',
      subjectType: 'recipe',
      subjectId: id,
      reason: input.comment ?? r.changeReason,
      before: { status: 'in_review', versionInForce: previous?.version ?? null },
      after: {
        status: 'released',
        versionInForce: r.version,
        releasedAt: now.toISOString(),
        changes: releaseDiff,
      },
    });
    if (previous) {
      await insertAudit(tx, {
        actorId: actor.id,
        action: 'recipes.retired',
        subjectType: 'recipe',
        subjectId: previous.id,
        reason: `replaced by version ${r.version}`,
        before: { status: 'released' },
        after: { status: 'retired', retiredAt: now.toISOString() },
      });
    }
  });
  return versionViewById(ctx.db, id);
}

/** The reviewer sends the version back to draft with a comment; the author gets an e-mail. */
export async function sendBackVersion(
  ctx: RecipeDeskContext,
  actor: SessionUser,
  id: string,
  input: { comment: string },
) {
  const r = await repo.findRecipeRow(ctx.db, id);
  if (!r) throw recipeErrors.notFound();
  if (r.status !== 'in_review') throw recipeErrors.notInReview(r.version, statusWords(r.status));
  await ctx.db.transaction(async (tx) => {
    const back = await repo.updateRecipeRowIf(
      tx,
      id,
      { status: 'in_review', revision: r.revision },
      {
        status: 'draft',
        reviewComment: input.comment,
        revision: r.revision + 1,
        updatedBy: actor.id,
        updatedAt: ctx.clock(),
      },
    );
    if (!back) return lostRace(ctx.db, id, 'in_review');
    await insertAudit(tx, {
      actorId: actor.id,
      action: 'recipes.sent_back',
      subjectType: 'recipe',
      subjectId: id,
      reason: input.comment,
      before: { status: 'in_review' },
      after: { status: 'draft' },
    });
  });
  const p = await people(ctx.db);
  const author = r.submittedBy ? p.get(r.submittedBy) : undefined;
  const model = await repo.findModelRow(ctx.db, r.modelId);
  if (author?.email && author.id !== actor.id) {
    await ctx.mailer
      .send({
        to: author.email,
        subject: `Recipe sent back: ${model!.code} version ${r.version}`,
        text: [
          `Hello ${author.displayName},`,
          '',
          `${actor.displayName} sent recipe version ${r.version} of ${model!.code} back to draft:`,
          input.comment,
          '',
          `${ctx.publicUrl}/recipes/versions/${id}`,
        ].join('\n'),
      })
      .catch((e: unknown) => ctx.logger.warn({ err: e }, 'recipe sent-back mail not sent'));
  }
  return versionViewById(ctx.db, id);
}

/** Field-by-field changes from version `fromId` to version `toId`. */
export async function diffVersions(ctx: Pick<RecipeDeskContext, 'db'>, fromId: string, toId: string) {
  const [a, b] = await Promise.all([repo.findRecipeRow(ctx.db, fromId), repo.findRecipeRow(ctx.db, toId)]);
  if (!a || !b) throw recipeErrors.notFound();
  return {
    from: { id: a.id, version: a.version, modelId: a.modelId },
    to: { id: b.id, version: b.version, modelId: b.modelId },
    changes: diffRecipes(a.body, b.body),
  };
}
