import { sql } from 'drizzle-orm';
import {
  date,
  index,
  integer,
  jsonb,
  pgEnum,
  pgTable,
  primaryKey,
  text,
  timestamp,
  uniqueIndex,
  uuid,
} from 'drizzle-orm/pg-core';
import { users } from '../users/users.table';
import { units } from '../units/units.table';
import { HOLD_DISPOSITIONS, HOLD_SOURCES, INVESTIGATION_STATUSES } from '#shared/schemas/quality';

/** Material-review dispositions of a released hold. `scrap` is final. */
export const holdDispositionEnum = pgEnum('hold_disposition', HOLD_DISPOSITIONS);
/** Who or what put a unit on hold: a person, the recipe's retest policy, or a programming read-back mismatch. */
export const holdSourceEnum = pgEnum('hold_source', HOLD_SOURCES);
export const investigationStatusEnum = pgEnum('investigation_status', INVESTIGATION_STATUSES);

/**
 * A return or complaint case. `reference` is the human number (INV-0001), given in order of opening.
 */
export const investigations = pgTable(
  'investigations',
  {
    id: uuid().primaryKey().defaultRandom(),
    number: integer().generatedAlwaysAsIdentity(),
    title: text().notNull(),
    customerRef: text(),
    symptom: text(),
    receivedOn: date({ mode: 'string' }),
    status: investigationStatusEnum().notNull().default('open'),
    findings: text(),
    containmentAction: text(),
    rootCause: text(),
    correctiveAction: text(),
    verification: text(),
    openedBy: uuid().references(() => users.id),
    openedByName: text(),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    closedAt: timestamp({ withTimezone: true }),
  },
  (t) => [
    uniqueIndex('investigations_number_key').on(t.number),
    index('investigations_status_idx').on(t.status),
  ],
);

/** Units linked to an investigation (added from a search or by a hold under the case). */
export const investigationUnits = pgTable(
  'investigation_units',
  {
    investigationId: uuid()
      .notNull()
      .references(() => investigations.id),
    unitId: uuid()
      .notNull()
      .references(() => units.id),
    addedBy: uuid().references(() => users.id),
    addedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [
    primaryKey({ columns: [t.investigationId, t.unitId] }),
    index('investigation_units_unit_idx').on(t.unitId),
  ],
);

/** A comment in an investigation's thread (never edited, never deleted). */
export const investigationComments = pgTable(
  'investigation_comments',
  {
    id: uuid().primaryKey().defaultRandom(),
    investigationId: uuid()
      .notNull()
      .references(() => investigations.id),
    authorId: uuid().references(() => users.id),
    authorName: text().notNull(),
    body: text().notNull(),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('investigation_comments_case_idx').on(t.investigationId, t.createdAt)],
);

/**
 * Every hold a unit has been under, with its release. At most one open hold per unit (the partial
 * unique index), which makes holding safe to repeat: a unit already on hold stays held once.
 */
export const unitHolds = pgTable(
  'unit_holds',
  {
    id: uuid().primaryKey().defaultRandom(),
    unitId: uuid()
      .notNull()
      .references(() => units.id),
    reason: text().notNull(),
    source: holdSourceEnum().notNull(),
    heldBy: uuid().references(() => users.id),
    heldByName: text(),
    heldAt: timestamp({ withTimezone: true }).notNull(),
    investigationId: uuid().references(() => investigations.id),
    releasedAt: timestamp({ withTimezone: true }),
    releasedBy: uuid().references(() => users.id),
    releasedByName: text(),
    disposition: holdDispositionEnum(),
    releaseReason: text(),
    /** For `recalibrate`: the attempts the unit gets from the release on (the recipe's maximum then). */
    attemptBudget: integer(),
  },
  (t) => [
    uniqueIndex('unit_holds_one_open_key')
      .on(t.unitId)
      .where(sql`${t.releasedAt} is null`),
    index('unit_holds_unit_idx').on(t.unitId, t.heldAt),
    index('unit_holds_open_idx')
      .on(t.heldAt)
      .where(sql`${t.releasedAt} is null`),
    index('unit_holds_investigation_idx').on(t.investigationId),
  ],
);

export type UnitHoldRecord = typeof unitHolds.$inferSelect;
export type InvestigationRecord = typeof investigations.$inferSelect;

/**
 * A containment search saved under a name, shared by the quality team: the filter as the form sends
 * it (every value a string), so opening it fills the form and the URL exactly as it was. Saved and
 * deleted, never edited; both audited.
 */
export const savedSearches = pgTable(
  'saved_searches',
  {
    id: uuid().primaryKey().defaultRandom(),
    name: text().notNull(),
    filter: jsonb().$type<Record<string, string>>().notNull(),
    savedBy: uuid().references(() => users.id),
    savedByName: text().notNull(),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('saved_searches_name_key').on(sql`lower(${t.name})`)],
);

export type SavedSearchRecord = typeof savedSearches.$inferSelect;
