import { createHash, randomUUID } from 'node:crypto';
import fs from 'node:fs';
import type { Db } from '#server/db/client';
import type { SessionUser } from '#server/lib/auth';
import type { Logger } from '#server/lib/logger';
import { insertAudit } from '../audit/audit.repository';
import type { ObjectStore } from '../storage/object-store';
import {
  ATTACHMENT_KINDS_TEXT,
  ATTACHMENT_LIMIT_BYTES,
  type Attachment,
  type RemoveAttachment,
} from '#shared/schemas/attachments';
import { investigationReference } from '#shared/schemas/quality';
import { attachmentKind } from './attachment-kind';
import type { SpooledFile } from './attachment-upload';
import * as repo from './attachments.repository';
import type { InvestigationAttachmentRecord } from './attachments.table';
import { qualityErrors } from './quality.errors';
import { findInvestigation } from './quality.repository';

export interface AttachmentContext {
  db: Db;
  clock: () => Date;
  storage: ObjectStore;
  logger: Logger;
}

function view(a: InvestigationAttachmentRecord): Attachment {
  return {
    id: a.id,
    fileName: a.fileName,
    contentType: a.contentType,
    sizeBytes: a.sizeBytes,
    sha256: a.sha256,
    uploadedBy: a.uploadedByName,
    uploadedAt: a.uploadedAt.toISOString(),
  };
}

/** A name safe to show and to send back in Content-Disposition: no path, no control characters. */
function cleanFileName(name: string): string {
  const base = name.split(/[\\/]/).pop() ?? '';
  // eslint-disable-next-line no-control-regex -- control characters are what is removed
  const controls = /[\u0000-\u001f\u007f]/g;
  const clean = base.replace(controls, '').trim().slice(0, 200);
  return clean || 'attachment';
}

async function openCase(db: Db, investigationId: string) {
  const inv = await findInvestigation(db, investigationId);
  if (!inv) throw qualityErrors.investigationNotFound();
  if (inv.status === 'closed') throw qualityErrors.investigationClosed(investigationReference(inv.number));
  return inv;
}

/**
 * Attaches a spooled upload to a case: refuses a closed case, a file over the limit or of a kind its
 * bytes do not show as accepted (nothing is stored then), sends the bytes to object storage with
 * their SHA-256 (the store checks it), and records the row and its audit entry in one transaction.
 * Should that transaction fail, the object just written is deleted again.
 */
export async function addAttachment(
  ctx: AttachmentContext,
  actor: SessionUser,
  investigationId: string,
  file: SpooledFile,
): Promise<Attachment> {
  await openCase(ctx.db, investigationId);
  const fileName = cleanFileName(file.originalName);
  if (file.size > ATTACHMENT_LIMIT_BYTES) throw qualityErrors.attachmentTooLarge(ATTACHMENT_LIMIT_BYTES);
  const kind = await attachmentKind(file.path, fileName);
  if (!kind.accepted) throw qualityErrors.attachmentRefused(fileName, kind.found, ATTACHMENT_KINDS_TEXT);

  const objectKey = `investigations/${investigationId}/${randomUUID()}`;
  await ctx.storage.put(objectKey, fs.createReadStream(file.path), {
    contentType: kind.contentType,
    contentLength: file.size,
    sha256Hex: file.sha256,
  });
  try {
    const row = await ctx.db.transaction(async (tx) => {
      const inv = await findInvestigation(tx, investigationId, true);
      if (!inv) throw qualityErrors.investigationNotFound();
      if (inv.status === 'closed')
        throw qualityErrors.investigationClosed(investigationReference(inv.number));
      const row = await repo.insertAttachment(tx, {
        investigationId,
        fileName,
        contentType: kind.contentType,
        sizeBytes: file.size,
        sha256: file.sha256,
        objectKey,
        uploadedBy: actor.id,
        uploadedByName: actor.displayName,
        uploadedAt: ctx.clock(),
      });
      await insertAudit(tx, {
        actorId: actor.id,
        actorName: actor.displayName,
        action: 'investigations.attachment_added',
        subjectType: 'investigation',
        subjectId: investigationId,
        after: {
          attachmentId: row.id,
          fileName,
          contentType: kind.contentType,
          sizeBytes: file.size,
          sha256: file.sha256,
        },
      });
      return row;
    });
    return view(row);
  } catch (e) {
    await ctx.storage
      .remove(objectKey)
      .catch((err: unknown) => ctx.logger.warn({ err, objectKey }, 'attachment object left behind'));
    throw e;
  }
}

export async function listAttachments(ctx: Pick<AttachmentContext, 'db'>, investigationId: string) {
  if (!(await findInvestigation(ctx.db, investigationId))) throw qualityErrors.investigationNotFound();
  return (await repo.currentAttachments(ctx.db, investigationId)).map(view);
}

/**
 * The bytes of an attachment, read back from storage and checked against the SHA-256 taken on the way
 * in: a missing or changed object is refused (502), never sent as if it were the original.
 */
export async function readAttachment(
  ctx: AttachmentContext,
  investigationId: string,
  id: string,
): Promise<{ attachment: Attachment; bytes: Buffer }> {
  const row = await repo.findAttachment(ctx.db, investigationId, id);
  if (!row) throw qualityErrors.attachmentNotFound();
  if (row.removedAt) throw qualityErrors.attachmentRemoved();
  const bytes = await ctx.storage.get(row.objectKey);
  if (!bytes || createHash('sha256').update(bytes).digest('hex') !== row.sha256) {
    ctx.logger.error(
      { attachmentId: id, objectKey: row.objectKey },
      'attachment missing or changed in storage',
    );
    throw qualityErrors.attachmentDamaged();
  }
  return { attachment: view(row), bytes };
}

/**
 * Removes an attachment from a case (a wrong file, a photo that should not be there): the row is
 * marked removed with who, when and why, and audited; the object stays in storage as the record.
 */
export async function removeAttachment(
  ctx: AttachmentContext,
  actor: SessionUser,
  investigationId: string,
  id: string,
  input: RemoveAttachment,
): Promise<void> {
  await ctx.db.transaction(async (tx) => {
    const inv = await findInvestigation(tx, investigationId, true);
    if (!inv) throw qualityErrors.investigationNotFound();
    if (inv.status === 'closed') throw qualityErrors.investigationClosed(investigationReference(inv.number));
    const row = await repo.findAttachment(tx, investigationId, id);
    if (!row) throw qualityErrors.attachmentNotFound();
    const now = ctx.clock();
    const done = await repo.markAttachmentRemoved(tx, id, {
      removedAt: now,
      removedBy: actor.id,
      removedByName: actor.displayName,
      removedReason: input.reason,
    });
    if (!done) throw qualityErrors.attachmentRemoved();
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'investigations.attachment_removed',
      subjectType: 'investigation',
      subjectId: investigationId,
      before: { attachmentId: id, fileName: row.fileName, sha256: row.sha256 },
      after: { reason: input.reason },
    });
  });
}
