import { bigint, index, pgTable, text, timestamp, uniqueIndex, uuid } from 'drizzle-orm/pg-core';
import { users } from '../users/users.table';
import { investigations } from './quality.table';

/**
 * A file attached to an investigation (photo, scope capture, customer report). The bytes live in
 * object storage under `objectKey`; the row keeps what was checked on the way in: the type found in
 * the bytes, the size and the SHA-256 a download is verified against. Rows are never deleted or
 * edited: removing an attachment fills the `removed*` columns (who, when, why), hides it from the
 * case and stops downloads, and keeps the object as evidence.
 */
export const investigationAttachments = pgTable(
  'investigation_attachments',
  {
    id: uuid().primaryKey().defaultRandom(),
    investigationId: uuid()
      .notNull()
      .references(() => investigations.id),
    /** The name the file had on the uploader's computer (shown and offered on download). */
    fileName: text().notNull(),
    /** The type its bytes show (not what the browser claimed): image/png, image/jpeg, application/pdf… */
    contentType: text().notNull(),
    sizeBytes: bigint({ mode: 'number' }).notNull(),
    /** Lower-case hex SHA-256 of the bytes. */
    sha256: text().notNull(),
    objectKey: text().notNull(),
    uploadedBy: uuid().references(() => users.id),
    uploadedByName: text().notNull(),
    uploadedAt: timestamp({ withTimezone: true }).notNull(),
    removedAt: timestamp({ withTimezone: true }),
    removedBy: uuid().references(() => users.id),
    removedByName: text(),
    removedReason: text(),
  },
  (t) => [
    index('investigation_attachments_case_idx').on(t.investigationId, t.uploadedAt),
    uniqueIndex('investigation_attachments_object_key').on(t.objectKey),
  ],
);

export type InvestigationAttachmentRecord = typeof investigationAttachments.$inferSelect;
