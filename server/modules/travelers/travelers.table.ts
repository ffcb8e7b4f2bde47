import { customType, index, integer, pgEnum, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import { calibrations } from '../calibrations/calibrations.table';
import { units } from '../units/units.table';
import { users } from '../users/users.table';
import { PAGE_SIZES } from '#shared/schemas/travelers';

const bytea = customType<{ data: Buffer; driverData: Buffer }>({
  dataType: () => 'bytea',
});

export const pageSizeEnum = pgEnum('page_size', PAGE_SIZES);

/**
 * Every traveler document produced, kept with its SHA-256: print 1 is rendered by a job as soon as
 * the calibration commits; each reprint is rendered on request with its print number on the page.
 */
export const travelers = pgTable(
  'travelers',
  {
    id: uuid().primaryKey().defaultRandom(),
    unitId: uuid()
      .notNull()
      .references(() => units.id),
    calibrationId: uuid()
      .notNull()
      .references(() => calibrations.id),
    printNumber: integer().notNull(),
    pageSize: pageSizeEnum().notNull(),
    pdf: bytea().notNull(),
    sha256: text().notNull(),
    bytes: integer().notNull(),
    renderMs: integer(),
    requestedBy: uuid().references(() => users.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [
    index('travelers_unit_idx').on(t.unitId, t.createdAt),
    index('travelers_calibration_idx').on(t.calibrationId),
  ],
);

export type TravelerRecord = typeof travelers.$inferSelect;
