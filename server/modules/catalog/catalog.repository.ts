import { eq } from 'drizzle-orm';
import type { DbOrTx } from '../../db/client';
import { models, recipes, type ModelRecord, type RecipeRecord } from './catalog.table';

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
