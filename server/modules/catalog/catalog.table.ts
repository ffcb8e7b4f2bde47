import { sql } from 'drizzle-orm';
import {
  integer,
  jsonb,
  pgEnum,
  pgTable,
  text,
  timestamp,
  uniqueIndex,
  uuid,
  type AnyPgColumn,
} from 'drizzle-orm/pg-core';
import type { Recipe } from '../../../shared/schemas/recipe';
import { users } from '../users/users.table';

/** A motor model built on the line. `activeRecipeId` is the released recipe version stations use now. */
export const models = pgTable(
  'models',
  {
    id: uuid().primaryKey().defaultRandom(),
    code: text().notNull(),
    name: text().notNull(),
    polePairs: integer().notNull(),
    activeRecipeId: uuid().references((): AnyPgColumn => recipes.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('models_code_key').on(sql`upper(${t.code})`)],
);

export const recipeStatusEnum = pgEnum('recipe_status', ['draft', 'released', 'retired']);

/**
 * Recipe versions. A released version is immutable (a trigger refuses changes to its body and
 * deletion); retiring it is the only change allowed. Every calibration names the version it used.
 */
export const recipes = pgTable(
  'recipes',
  {
    id: uuid().primaryKey().defaultRandom(),
    modelId: uuid()
      .notNull()
      .references(() => models.id),
    version: integer().notNull(),
    status: recipeStatusEnum().notNull().default('draft'),
    body: jsonb().$type<Recipe>().notNull(),
    notes: text(),
    createdBy: uuid().references(() => users.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    releasedBy: uuid().references(() => users.id),
    releasedAt: timestamp({ withTimezone: true }),
  },
  (t) => [uniqueIndex('recipes_model_version_key').on(t.modelId, t.version)],
);

export type ModelRecord = typeof models.$inferSelect;
export type RecipeRecord = typeof recipes.$inferSelect;
