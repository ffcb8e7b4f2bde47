import { useId, useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { InvestigationDetail } from '#shared/schemas/quality';
import {
  ATTACHMENT_KINDS_TEXT,
  ATTACHMENT_LIMIT_BYTES,
  attachmentUploadSchema,
  removeAttachmentSchema,
  type Attachment,
  type AttachmentUpload,
  type RemoveAttachment,
} from '#shared/schemas/attachments';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { Dialog } from '#src/components/ui/dialog';
import { TextField } from '#src/components/ui/field';
import { Panel } from '#src/components/ui/panel';
import { QueryState } from '#src/components/ui/query-state';
import { applyServerErrors } from '#src/lib/form-errors';
import { formatDateTime } from '#src/lib/format';
import { attachmentHref, useAddAttachment, useAttachments, useRemoveAttachment } from '../api/attachments';

const LIMIT_MB = ATTACHMENT_LIMIT_BYTES / (1024 * 1024);

function formatSize(bytes: number): string {
  if (bytes < 1024) return `${bytes} bytes`;
  if (bytes < 1024 * 1024) return `${(bytes / 1024).toFixed(1)} kB`;
  return `${(bytes / (1024 * 1024)).toFixed(1)} MB`;
}

const KIND_WORDS: Record<string, string> = {
  'image/png': 'PNG picture',
  'image/jpeg': 'JPEG picture',
  'application/pdf': 'PDF',
  'application/zip': 'ZIP archive',
  'text/csv; charset=utf-8': 'CSV',
  'text/plain; charset=utf-8': 'Text',
};

function RemoveDialog({ caseId, file, onClose }: { caseId: string; file: Attachment; onClose: () => void }) {
  const remove = useRemoveAttachment(caseId);
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<RemoveAttachment>({
    resolver: zodResolver(removeAttachmentSchema),
    defaultValues: { reason: '' },
  });
  const submit = form.handleSubmit(async ({ reason }) => {
    setBanner(null);
    try {
      await remove.mutateAsync({ id: file.id, reason });
      onClose();
    } catch (error) {
      setBanner(applyServerErrors(error, form.setError, ['reason']));
    }
  });
  return (
    <Dialog
      open
      title={`Remove ${file.fileName}?`}
      description="It disappears from this case. The file itself and a note of who removed it, when and why are kept."
      onClose={onClose}
    >
      <form className="flex flex-col gap-4" onSubmit={submit} noValidate>
        <TextField
          label="Why is it removed?"
          required
          error={form.formState.errors.reason?.message}
          {...form.register('reason')}
        />
        {banner ? (
          <Alert tone="fault" title="Not removed">
            {banner}
          </Alert>
        ) : null}
        <div className="flex flex-wrap gap-3">
          <Button type="submit" variant="primary" busy={remove.isPending}>
            Remove the file
          </Button>
          <Button onClick={onClose}>Keep it</Button>
        </div>
      </form>
    </Dialog>
  );
}

/** Picks one file and attaches it; a file over the limit is refused before it is sent. */
function AttachForm({ caseId }: { caseId: string }) {
  const add = useAddAttachment(caseId);
  const [banner, setBanner] = useState<string | null>(null);
  // A new key empties the file input after an upload (its value cannot be set to a file).
  const [inputKey, setInputKey] = useState(0);
  const hintId = useId();
  const errorId = useId();
  const form = useForm<AttachmentUpload>({
    resolver: zodResolver(attachmentUploadSchema),
    mode: 'onChange',
  });
  const error = form.formState.errors.file?.message;
  const submit = form.handleSubmit(async ({ file }) => {
    setBanner(null);
    try {
      await add.mutateAsync(file);
      form.reset();
      setInputKey((k) => k + 1);
    } catch (e) {
      setBanner(applyServerErrors(e, form.setError, ['file']));
    }
  });
  return (
    <form className="flex flex-col gap-3" onSubmit={submit} noValidate>
      <label className="flex flex-col gap-1.5">
        <span className="text-sm font-semibold tracking-wide text-graphite-200 uppercase">
          File to attach
        </span>
        <input
          key={inputKey}
          type="file"
          aria-invalid={error ? true : undefined}
          aria-describedby={error ? `${errorId} ${hintId}` : hintId}
          accept=".png,.jpg,.jpeg,.pdf,.csv,.txt,.zip,image/png,image/jpeg,application/pdf,text/csv,text/plain,application/zip"
          className="min-h-target text-graphite-100 file:mr-3 file:min-h-target file:border-0 file:bg-graphite-800 file:px-4 file:text-graphite-50"
          onChange={(e) => {
            setBanner(null);
            add.reset();
            // No file chosen leaves the value empty, which the schema refuses in its own words.
            form.setValue('file', e.target.files?.[0] as File, { shouldValidate: true });
          }}
        />
      </label>
      <p id={hintId} className="text-sm text-graphite-300">
        {ATTACHMENT_KINDS_TEXT}, up to {LIMIT_MB} MB each. The server checks what the file really is, not its
        name.
      </p>
      {error ? (
        <p id={errorId} role="alert" className="text-sm font-medium text-fault">
          {error}
        </p>
      ) : null}
      {banner ? (
        <Alert tone="fault" title="Not attached">
          {banner}
        </Alert>
      ) : null}
      {add.isSuccess ? (
        <p className="text-sm text-graphite-200" role="status">
          Attached {add.data.fileName}.
        </p>
      ) : null}
      <div>
        <Button type="submit" variant="primary" busy={add.isPending}>
          Attach file
        </Button>
      </div>
    </form>
  );
}

/**
 * A case's files: photos, scope captures, customer reports. Each is checked by its contents on the
 * server and kept with its SHA-256; a download is checked against it before it is sent.
 */
export function InvestigationAttachments({ inv }: { inv: InvestigationDetail }) {
  const list = useAttachments(inv.id);
  const [removing, setRemoving] = useState<Attachment | null>(null);
  const closed = inv.status === 'closed';

  return (
    <Panel title="Attachments" titleId="attachments-title">
      <QueryState
        query={list}
        pending="Reading the attachments…"
        failed="The attachments could not be read"
        isEmpty={(files) => files.length === 0}
        empty={<p className="mb-4 text-graphite-300">No file attached yet.</p>}
      >
        {(files) => (
          <ul className="mb-4 flex flex-col gap-3" data-testid="attachments">
            {files.map((a) => (
              <li
                key={a.id}
                className="flex flex-wrap items-center gap-x-4 gap-y-1 border-l-4 border-graphite-600 pl-3"
              >
                <div className="min-w-0 flex-1">
                  <div className="font-semibold break-all">{a.fileName}</div>
                  <div className="text-sm text-graphite-300">
                    {KIND_WORDS[a.contentType] ?? a.contentType} · {formatSize(a.sizeBytes)} · {a.uploadedBy}{' '}
                    · {formatDateTime(a.uploadedAt)}
                  </div>
                  <div className="font-mono text-xs break-all text-graphite-400">SHA-256 {a.sha256}</div>
                </div>
                <a
                  href={attachmentHref(inv.id, a.id)}
                  download={a.fileName}
                  className="inline-flex min-h-target items-center text-copper-200 underline underline-offset-4"
                >
                  Download<span className="sr-only"> {a.fileName}</span>
                </a>
                {closed ? null : (
                  <Button onClick={() => setRemoving(a)}>
                    Remove<span className="sr-only"> {a.fileName}</span>
                  </Button>
                )}
              </li>
            ))}
          </ul>
        )}
      </QueryState>
      {closed ? (
        <p className="text-graphite-300">The case is closed: no more files can be attached.</p>
      ) : (
        <AttachForm caseId={inv.id} />
      )}
      {removing ? <RemoveDialog caseId={inv.id} file={removing} onClose={() => setRemoving(null)} /> : null}
    </Panel>
  );
}
