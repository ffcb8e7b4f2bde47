import { sql } from 'drizzle-orm';
import {
  boolean,
  index,
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
import type { Recipe } from '#shared/schemas/recipe';
import type { RecipeFieldChange } from '#shared/recipe/recipe-fields';
import type { WhatIfFilters, WhatIfSummary } from '#shared/schemas/recipes';
import { users } from '../users/users.table';
import { RECIPE_STATUSES, WHAT_IF_STATUSES } from '#shared/schemas/recipes';

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

export const recipeStatusEnum = pgEnum('recipe_status', RECIPE_STATUSES);

/**
 * Recipe versions: draft → in review → released → retired (in review may go back to draft; a draft
 * may be discarded, which keeps its row and takes it off the working list).
 * A released version is immutable (a trigger refuses changes to its body, release record and
 * deletion); retiring it is the only change allowed. Every calibration names the version it used.
 * `revision` counts saves of a draft, for optimistic concurrency.
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
    /** The version this draft was copied from. */
    basedOnId: uuid().references((): AnyPgColumn => recipes.id),
    revision: integer().notNull().default(1),
    createdBy: uuid().references(() => users.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    updatedBy: uuid().references(() => users.id),
    updatedAt: timestamp({ withTimezone: true }),
    /** Why the author wants this change (given on submitting). */
    changeReason: text(),
    submittedBy: uuid().references(() => users.id),
    submittedAt: timestamp({ withTimezone: true }),
    /** The reviewer's comment when sending the draft back (or on approving). */
    reviewComment: text(),
    /** Field-by-field changes against the version in force when it was released. */
    releaseDiff: jsonb().$type<RecipeFieldChange[]>(),
    /** The version this release replaced (null for a model's first release). */
    replacesId: uuid().references((): AnyPgColumn => recipes.id),
    releasedBy: uuid().references(() => users.id),
    releasedAt: timestamp({ withTimezone: true }),
    retiredAt: timestamp({ withTimezone: true }),
    /** Who discarded the draft, when and why (the row stays, for the record). */
    discardedBy: uuid().references(() => users.id),
    discardedAt: timestamp({ withTimezone: true }),
    discardReason: text(),
  },
  (t) => [
    uniqueIndex('recipes_model_version_key').on(t.modelId, t.version),
    uniqueIndex('recipes_one_released_per_model')
      .on(t.modelId)
      .where(sql`status = 'released'`),
  ],
);

export const whatIfStatusEnum = pgEnum('what_if_status', WHAT_IF_STATUSES);

/**
 * A what-if run: one recipe version replayed over stored measurements of past units. It only reads
 * measurements; its figures live here and nowhere else.
 */
export const whatIfRuns = pgTable(
  'what_if_runs',
  {
    id: uuid().primaryKey().defaultRandom(),
    recipeId: uuid()
      .notNull()
      .references(() => recipes.id),
    /** The version in force when the run was asked for: the comparison baseline. */
    baselineRecipeId: uuid()
      .notNull()
      .references(() => recipes.id),
    modelId: uuid()
      .notNull()
      .references(() => models.id),
    filters: jsonb().$type<WhatIfFilters>().notNull(),
    status: whatIfStatusEnum().notNull().default('queued'),
    cancelRequested: boolean().notNull().default(false),
    total: integer().notNull().default(0),
    processed: integer().notNull().default(0),
    summary: jsonb().$type<WhatIfSummary>(),
    error: text(),
    requestedBy: uuid()
      .notNull()
      .references(() => users.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    startedAt: timestamp({ withTimezone: true }),
    finishedAt: timestamp({ withTimezone: true }),
  },
  (t) => [index('what_if_runs_recipe_idx').on(t.recipeId, t.createdAt)],
);

export type ModelRecord = typeof models.$inferSelect;
export type RecipeRecord = typeof recipes.$inferSelect;
export type WhatIfRunRecord = typeof whatIfRuns.$inferSelect;
