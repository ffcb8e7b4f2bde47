import { createHash, randomUUID } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Transform } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type { Request, Response } from 'express';
import multer from 'multer';
import { ATTACHMENT_LIMIT_BYTES } from '#shared/schemas/attachments';
import { qualityErrors } from './quality.errors';

/** An upload spooled to a private temporary file, with what was measured while it streamed in. */
export interface SpooledFile {
  path: string;
  size: number;
  /** Lower-case hex SHA-256 of the bytes. */
  sha256: string;
  originalName: string;
}

const SPOOL_DIR = path.join(os.tmpdir(), 'phasewright-uploads');

/**
 * A multer storage engine that streams the file to a temporary file while hashing and counting it.
 * The upload reaches object storage only after its size and kind are known, so a file too big or of a
 * refused kind leaves nothing behind: multer removes the spooled file when its size limit trips
 * (`_removeFile`), and the route removes it after every request.
 */
const spoolStorage: multer.StorageEngine = {
  _handleFile(_req, file, cb) {
    fs.mkdirSync(SPOOL_DIR, { recursive: true, mode: 0o700 });
    const target = path.join(SPOOL_DIR, randomUUID());
    const hash = createHash('sha256');
    let size = 0;
    const measure = new Transform({
      transform(chunk: Buffer, _enc, next) {
        hash.update(chunk);
        size += chunk.length;
        next(null, chunk);
      },
    });
    pipeline(file.stream, measure, fs.createWriteStream(target, { mode: 0o600 })).then(
      () => cb(null, { path: target, size, filename: hash.digest('hex') }),
      (err: Error) => {
        fs.rm(target, { force: true }, () => cb(err));
      },
    );
  },
  _removeFile(_req, file, cb) {
    fs.rm(file.path, { force: true }, () => cb(null));
  },
};

const upload = multer({
  storage: spoolStorage,
  limits: { fileSize: ATTACHMENT_LIMIT_BYTES, files: 1, fields: 5, parts: 6 },
}).single('file');

/** Express middleware: the multipart field "file" spooled; a file over the limit is a plain 413. */
export function receiveAttachment(req: Request, res: Response, next: (err?: unknown) => void) {
  upload(req, res, (err: unknown) => {
    if (err instanceof multer.MulterError && err.code === 'LIMIT_FILE_SIZE') {
      next(qualityErrors.attachmentTooLarge(ATTACHMENT_LIMIT_BYTES));
      return;
    }
    // The spooled file goes when the answer is sent, whatever refused the request after this point.
    const file = spooledFile(req);
    if (file) res.once('close', () => discardSpooled(file));
    next(err);
  });
}

/** The spooled file of a request, if any (its hash travels in multer's `filename`). */
export function spooledFile(req: Request): SpooledFile | null {
  const f = req.file;
  if (!f) return null;
  return { path: f.path, size: f.size, sha256: f.filename, originalName: f.originalname };
}

export function discardSpooled(file: SpooledFile | null): void {
  if (file) fs.rm(file.path, { force: true }, () => {});
}
