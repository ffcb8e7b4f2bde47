import { and, asc, desc, eq, inArray, sql } from 'drizzle-orm';
import type { DbOrTx } from '#server/db/client';
import {
  models,
  recipes,
  whatIfRuns,
  type ModelRecord,
  type RecipeRecord,
  type WhatIfRunRecord,
} from './recipes.table';

/**
 * Released and retired recipe versions never change their body (the database refuses it), so they
 * are read once per process. Drafts and versions in review can still change and are never cached.
 */
const releasedBodies = new Map<string, RecipeRecord>();

export async function releasedRecipe(db: DbOrTx, id: string): Promise<RecipeRecord> {
  const cached = releasedBodies.get(id);
  if (cached) return cached;
  const [row] = await db.select().from(recipes).where(eq(recipes.id, id));
  if (!row) throw new Error(`recipe ${id} does not exist`);
  if (row.status === 'released' || row.status === 'retired') releasedBodies.set(id, row);
  return row;
}

export async function listModelRows(db: DbOrTx): Promise<ModelRecord[]> {
  return db.select().from(models).orderBy(asc(models.code));
}

export async function findModelRow(db: DbOrTx, id: string): Promise<ModelRecord | undefined> {
  const [row] = await db.select().from(models).where(eq(models.id, id));
  return row;
}

/** The model row, locked until the transaction ends: releases of one model happen one at a time. */
export async function lockModelRow(tx: DbOrTx, id: string): Promise<ModelRecord | undefined> {
  const [row] = await tx.select().from(models).where(eq(models.id, id)).for('update');
  return row;
}

export async function modelCodeTaken(db: DbOrTx, code: string, exceptId?: string): Promise<boolean> {
  const rows = await db
    .select({ id: models.id })
    .from(models)
    .where(sql`upper(${models.code}) = upper(${code})`);
  return rows.some((r) => r.id !== exceptId);
}

export async function insertModelRow(
  db: DbOrTx,
  values: { code: string; name: string; polePairs: number },
): Promise<ModelRecord> {
  const [row] = await db.insert(models).values(values).returning();
  return row;
}

export async function updateModelRow(
  db: DbOrTx,
  id: string,
  values: Partial<Pick<ModelRecord, 'code' | 'name' | 'polePairs' | 'activeRecipeId'>>,
): Promise<ModelRecord> {
  const [row] = await db.update(models).set(values).where(eq(models.id, id)).returning();
  return row;
}

/** Every version of the given models (or all), newest first per model. */
export async function listRecipeRows(db: DbOrTx, modelId?: string): Promise<RecipeRecord[]> {
  const q = db.select().from(recipes);
  return (modelId ? q.where(eq(recipes.modelId, modelId)) : q).orderBy(
    asc(recipes.modelId),
    desc(recipes.version),
  );
}

export async function findRecipeRow(db: DbOrTx, id: string): Promise<RecipeRecord | undefined> {
  const [row] = await db.select().from(recipes).where(eq(recipes.id, id));
  return row;
}

export async function nextRecipeVersion(db: DbOrTx, modelId: string): Promise<number> {
  const [{ max }] = await db
    .select({ max: sql<number>`coalesce(max(${recipes.version}), 0)::int` })
    .from(recipes)
    .where(eq(recipes.modelId, modelId));
  return max + 1;
}

export async function insertRecipeRow(
  db: DbOrTx,
  values: typeof recipes.$inferInsert,
): Promise<RecipeRecord> {
  const [row] = await db.insert(recipes).values(values).returning();
  return row;
}

/**
 * Updates a version only when it still has the expected status and revision; undefined when someone
 * else changed it first (the caller reads the row again to say who and when).
 */
export async function updateRecipeRowIf(
  db: DbOrTx,
  id: string,
  expect: { status: RecipeRecord['status']; revision?: number },
  values: Partial<typeof recipes.$inferInsert>,
): Promise<RecipeRecord | undefined> {
  const conditions = [eq(recipes.id, id), eq(recipes.status, expect.status)];
  if (expect.revision !== undefined) conditions.push(eq(recipes.revision, expect.revision));
  const [row] = await db
    .update(recipes)
    .set(values)
    .where(and(...conditions))
    .returning();
  return row;
}

export async function insertWhatIfRun(
  db: DbOrTx,
  values: typeof whatIfRuns.$inferInsert,
): Promise<WhatIfRunRecord> {
  const [row] = await db.insert(whatIfRuns).values(values).returning();
  return row;
}

export async function findWhatIfRun(db: DbOrTx, id: string): Promise<WhatIfRunRecord | undefined> {
  const [row] = await db.select().from(whatIfRuns).where(eq(whatIfRuns.id, id));
  return row;
}

export async function listWhatIfRunsOfRecipe(db: DbOrTx, recipeId: string): Promise<WhatIfRunRecord[]> {
  return db
    .select()
    .from(whatIfRuns)
    .where(eq(whatIfRuns.recipeId, recipeId))
    .orderBy(desc(whatIfRuns.createdAt))
    .limit(20);
}

export async function updateWhatIfRun(
  db: DbOrTx,
  id: string,
  values: Partial<typeof whatIfRuns.$inferInsert>,
): Promise<WhatIfRunRecord | undefined> {
  const [row] = await db.update(whatIfRuns).set(values).where(eq(whatIfRuns.id, id)).returning();
  return row;
}

/** A model and its active (released) recipe version, or undefined when there is no such model. */
export async function findModelWithActiveRecipe(
  db: DbOrTx,
  modelId: string,
): Promise<{ model: ModelRecord; recipe: RecipeRecord | null } | undefined> {
  const [model] = await db.select().from(models).where(eq(models.id, modelId));
  if (!model) return undefined;
  const [recipe] = model.activeRecipeId
    ? await db.select().from(recipes).where(eq(recipes.id, model.activeRecipeId))
    : [];
  return { model, recipe: recipe ?? null };
}

/** Which of the given model ids exist. */
export async function existingModelIds(db: DbOrTx, ids: string[]): Promise<Set<string>> {
  if (ids.length === 0) return new Set();
  const rows = await db.select({ id: models.id }).from(models).where(inArray(models.id, ids));
  return new Set(rows.map((r) => r.id));
}
