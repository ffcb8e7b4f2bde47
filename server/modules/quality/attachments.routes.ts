import { z } from 'zod';
import type { AppDeps } from '#server/deps';
import { defineRoute } from '#server/lib/http';
import {
  ATTACHMENT_KINDS_TEXT,
  ATTACHMENT_LIMIT_BYTES,
  attachmentListSchema,
  attachmentSchema,
  removeAttachmentSchema,
} from '#shared/schemas/attachments';
import { discardSpooled, receiveAttachment, spooledFile } from './attachment-upload';
import {
  addAttachment,
  listAttachments,
  readAttachment,
  removeAttachment,
  type AttachmentContext,
} from './attachments.service';
import { qualityErrors } from './quality.errors';

const QUALITY = ['quality', 'engineer'] as const;
const caseParams = z.object({ id: z.uuid('No such investigation.') });
const attachmentParams = z.object({
  id: z.uuid('No such investigation.'),
  attachmentId: z.uuid('No such attachment.'),
});
const limitMb = ATTACHMENT_LIMIT_BYTES / (1024 * 1024);

/** Attachments of investigations: photos, scope captures, customer reports, kept in object storage. */
export function attachmentsRoutes(deps: AppDeps) {
  const ctx: AttachmentContext = {
    db: deps.db,
    clock: deps.clock,
    storage: deps.storage,
    logger: deps.logger,
  };
  return [
    defineRoute({
      method: 'get',
      path: '/api/quality/investigations/:id/attachments',
      access: QUALITY,
      summary: "An investigation's attachments (not the removed ones), oldest first",
      request: { params: caseParams },
      responses: { 200: { description: 'The attachments', schema: attachmentListSchema } },
      handle: async ({ params }, res) => {
        res.json({ attachments: await listAttachments(ctx, params.id) });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/quality/investigations/:id/attachments',
      access: QUALITY,
      summary: `Attach a file (${ATTACHMENT_KINDS_TEXT}; at most ${limitMb} MB), judged by its bytes`,
      request: { params: caseParams },
      multipart: { fileField: 'file', fields: {} },
      before: [receiveAttachment],
      responses: {
        201: { description: 'The attachment as stored, with its SHA-256', schema: attachmentSchema },
        409: { description: 'The investigation is closed' },
        413: { description: `The file is larger than ${limitMb} MB; nothing was stored` },
        415: { description: 'The bytes show a kind of file that is not accepted; nothing was stored' },
      },
      handle: async ({ params, caller }, res, req) => {
        const file = spooledFile(req);
        try {
          if (!file) throw qualityErrors.attachmentMissingFile();
          res.status(201).json(await addAttachment(ctx, caller.user, params.id, file));
        } finally {
          discardSpooled(file);
        }
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/quality/investigations/:id/attachments/:attachmentId',
      access: QUALITY,
      summary: 'Download an attachment, checked against its stored SHA-256 (sent in X-Content-SHA256)',
      request: { params: attachmentParams },
      responses: {
        200: { description: 'The file exactly as attached', contentType: 'application/octet-stream' },
        410: { description: 'The attachment was removed' },
        502: { description: 'The stored object is missing or changed; nothing is sent' },
      },
      handle: async ({ params }, res) => {
        const { attachment, bytes } = await readAttachment(ctx, params.id, params.attachmentId);
        res.setHeader('content-type', attachment.contentType);
        res.setHeader('content-length', String(bytes.length));
        res.attachment(attachment.fileName);
        res.setHeader('cache-control', 'private, no-store');
        res.setHeader('x-content-sha256', attachment.sha256);
        // RFC 9530: the digest of the representation sent.
        res.setHeader('repr-digest', `sha-256=:${Buffer.from(attachment.sha256, 'hex').toString('base64')}:`);
        res.end(bytes);
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/quality/investigations/:id/attachments/:attachmentId/remove',
      access: QUALITY,
      summary: 'Remove an attachment from the case, with a reason (kept in storage and in the audit log)',
      request: { params: attachmentParams, body: removeAttachmentSchema },
      responses: { 204: { description: 'Removed' }, 410: { description: 'Already removed' } },
      handle: async ({ params, body, caller }, res) => {
        await removeAttachment(ctx, caller.user, params.id, params.attachmentId, body);
        res.status(204).end();
      },
    }),
  ];
}
