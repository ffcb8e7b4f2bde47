import { and, asc, eq, isNull } from 'drizzle-orm';
import type { DbOrTx } from '#server/db/client';
import { investigationAttachments, type InvestigationAttachmentRecord } from './attachments.table';

export async function insertAttachment(
  tx: DbOrTx,
  values: typeof investigationAttachments.$inferInsert,
): Promise<InvestigationAttachmentRecord> {
  const [row] = await tx.insert(investigationAttachments).values(values).returning();
  return row;
}

/** The case's attachments that are not removed, oldest first. */
export async function currentAttachments(db: DbOrTx, investigationId: string) {
  return db
    .select()
    .from(investigationAttachments)
    .where(
      and(
        eq(investigationAttachments.investigationId, investigationId),
        isNull(investigationAttachments.removedAt),
      ),
    )
    .orderBy(asc(investigationAttachments.uploadedAt), asc(investigationAttachments.id));
}

export async function findAttachment(db: DbOrTx, investigationId: string, id: string) {
  const [row] = await db
    .select()
    .from(investigationAttachments)
    .where(
      and(eq(investigationAttachments.id, id), eq(investigationAttachments.investigationId, investigationId)),
    );
  return row ?? null;
}

export async function markAttachmentRemoved(
  tx: DbOrTx,
  id: string,
  removal: Pick<InvestigationAttachmentRecord, 'removedAt' | 'removedBy' | 'removedByName' | 'removedReason'>,
): Promise<boolean> {
  const done = await tx
    .update(investigationAttachments)
    .set(removal)
    .where(and(eq(investigationAttachments.id, id), isNull(investigationAttachments.removedAt)))
    .returning({ id: investigationAttachments.id });
  return done.length === 1;
}
