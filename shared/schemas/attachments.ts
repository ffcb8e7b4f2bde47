import { z } from 'zod';

/**
 * Investigation attachments: the limit and the kinds of file accepted. The server checks the kind by
 * the file's first bytes (its signature), never by its name or the type the browser claims.
 */

/** The largest attachment accepted: 20 MiB (a phone photo, a scope capture, a report PDF). */
export const ATTACHMENT_LIMIT_BYTES = 20 * 1024 * 1024;

/** The kinds accepted, in the words the screen and the refusals use. */
export const ATTACHMENT_KINDS_TEXT = 'PNG or JPEG pictures, PDF, CSV or plain text, and ZIP archives';

/** The upload form: one file within the limit (the server checks its kind by its bytes). */
export const attachmentUploadSchema = z.object({
  file: z
    .file('Choose a file to attach')
    .max(
      ATTACHMENT_LIMIT_BYTES,
      `Too large: one attachment may be at most ${ATTACHMENT_LIMIT_BYTES / (1024 * 1024)} MB.`,
    ),
});
export type AttachmentUpload = z.infer<typeof attachmentUploadSchema>;

export const attachmentSchema = z.object({
  id: z.uuid(),
  fileName: z.string(),
  contentType: z.string(),
  sizeBytes: z.number().int(),
  /** Lower-case hex SHA-256 of the bytes as received. */
  sha256: z.string(),
  uploadedBy: z.string(),
  uploadedAt: z.string(),
});
export type Attachment = z.infer<typeof attachmentSchema>;

export const attachmentListSchema = z.object({ attachments: z.array(attachmentSchema) });

export const removeAttachmentSchema = z.object({
  reason: z.string().trim().min(3, 'Say why the file is removed (at least 3 characters)').max(500),
});
export type RemoveAttachment = z.infer<typeof removeAttachmentSchema>;
