import type { SessionUser } from '#server/lib/auth';
import { insertAudit } from '../audit/audit.repository';
import {
  UNIT_SEARCH_FILTER_KEYS,
  unitSearchFilterSchema,
  type NewSavedSearch,
  type SavedSearch,
} from '#shared/schemas/quality';
import type { SavedSearchRecord } from './quality.table';
import { qualityErrors } from './quality.errors';
import * as repo from './quality.repository';
import type { QualityContext } from './quality.service';

type Ctx = Pick<QualityContext, 'db' | 'clock'>;

function toView(row: SavedSearchRecord, viewer: SessionUser): SavedSearch {
  return {
    id: row.id,
    name: row.name,
    filter: row.filter,
    savedBy: row.savedByName,
    mine: row.savedBy === viewer.id,
    createdAt: row.createdAt.toISOString(),
  };
}

/** Saved containment searches, by name (shared by everyone who may search). */
export async function listSavedSearches(ctx: Ctx, viewer: SessionUser): Promise<SavedSearch[]> {
  return (await repo.listSavedSearchRows(ctx.db)).map((r) => toView(r, viewer));
}

/**
 * Saves a filter under a name. The filter must be one the search accepts (it is checked as a search
 * would check it) and not empty; only the search's own filter names are kept, as the form sent them.
 */
export async function saveSearch(ctx: Ctx, actor: SessionUser, input: NewSavedSearch): Promise<SavedSearch> {
  unitSearchFilterSchema.parse(input.filter);
  const filter: Record<string, string> = {};
  for (const key of UNIT_SEARCH_FILTER_KEYS) {
    const v = input.filter[key]?.trim();
    if (v) filter[key] = v;
  }
  if (Object.keys(filter).length === 0) throw qualityErrors.savedSearchEmpty();
  return ctx.db.transaction(async (tx) => {
    const row = await repo.insertSavedSearch(tx, {
      name: input.name,
      filter,
      savedBy: actor.id,
      savedByName: actor.displayName,
      createdAt: ctx.clock(),
    });
    if (!row) throw qualityErrors.savedSearchNameTaken(input.name);
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'quality.search_saved',
      subjectType: 'saved_search',
      subjectId: row.id,
      after: { name: row.name, filter },
    });
    return toView(row, actor);
  });
}

/** Deletes a saved search: the person who saved it, or an administrator. */
export async function deleteSavedSearch(ctx: Ctx, actor: SessionUser, id: string): Promise<void> {
  await ctx.db.transaction(async (tx) => {
    const row = await repo.findSavedSearch(tx, id);
    if (!row) throw qualityErrors.savedSearchNotFound();
    if (row.savedBy !== actor.id && actor.role !== 'admin')
      throw qualityErrors.savedSearchNotYours(row.savedByName);
    await repo.deleteSavedSearchRow(tx, id);
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'quality.search_deleted',
      subjectType: 'saved_search',
      subjectId: row.id,
      before: { name: row.name, filter: row.filter, savedBy: row.savedByName },
    });
  });
}
