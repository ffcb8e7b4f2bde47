import { useId, useRef, useState } from 'react';
import type { InvestigationDetail } from '#shared/schemas/quality';
import {
  ATTACHMENT_KINDS_TEXT,
  ATTACHMENT_LIMIT_BYTES,
  type Attachment,
} from '#shared/schemas/attachments';
import { Alert, Loading } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { Dialog } from '#src/components/ui/dialog';
import { TextField } from '#src/components/ui/field';
import { Panel } from '#src/components/ui/panel';
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
  const [reason, setReason] = useState('');
  return (
    <Dialog
      open
      title={`Remove ${file.fileName}?`}
      description="It disappears from this case. The file itself and a note of who removed it, when and why are kept."
      onClose={onClose}
    >
      <form
        className="flex flex-col gap-4"
        onSubmit={(e) => {
          e.preventDefault();
          remove.mutate({ id: file.id, reason }, { onSuccess: onClose });
        }}
      >
        <TextField
          label="Why is it removed?"
          value={reason}
          onChange={(e) => setReason(e.target.value)}
          required
        />
        {remove.isError ? (
          <Alert tone="fault" title="Not removed">
            {remove.error.message}
          </Alert>
        ) : null}
        <div className="flex flex-wrap gap-3">
          <Button type="submit" variant="primary" busy={remove.isPending} disabled={reason.trim().length < 3}>
            Remove the file
          </Button>
          <Button onClick={onClose}>Keep it</Button>
        </div>
      </form>
    </Dialog>
  );
}

/**
 * A case's files: photos, scope captures, customer reports. Each is checked by its contents on the
 * server and kept with its SHA-256; a download is checked against it before it is sent.
 */
export function InvestigationAttachments({ inv }: { inv: InvestigationDetail }) {
  const list = useAttachments(inv.id);
  const add = useAddAttachment(inv.id);
  const [file, setFile] = useState<File | null>(null);
  const [tooBig, setTooBig] = useState(false);
  const [removing, setRemoving] = useState<Attachment | null>(null);
  const input = useRef<HTMLInputElement>(null);
  const hintId = useId();
  const closed = inv.status === 'closed';

  return (
    <Panel title="Attachments" titleId="attachments-title">
      {list.isPending ? <Loading label="Reading the attachments…" /> : null}
      {list.isError ? (
        <Alert tone="fault" title="The attachments could not be read">
          {list.error.message}
        </Alert>
      ) : null}
      {list.data?.length === 0 ? <p className="mb-4 text-graphite-300">No file attached yet.</p> : null}
      {list.data?.length ? (
        <ul className="mb-4 flex flex-col gap-3" data-testid="attachments">
          {list.data.map((a) => (
            <li
              key={a.id}
              className="flex flex-wrap items-center gap-x-4 gap-y-1 border-l-4 border-graphite-600 pl-3"
            >
              <div className="min-w-0 flex-1">
                <div className="font-semibold break-all">{a.fileName}</div>
                <div className="text-sm text-graphite-300">
                  {KIND_WORDS[a.contentType] ?? a.contentType} · {formatSize(a.sizeBytes)} · {a.uploadedBy} ·{' '}
                  {formatDateTime(a.uploadedAt)}
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
      ) : null}
      {closed ? (
        <p className="text-graphite-300">The case is closed: no more files can be attached.</p>
      ) : (
        <form
          className="flex flex-col gap-3"
          onSubmit={(e) => {
            e.preventDefault();
            if (!file || tooBig) return;
            add.mutate(file, {
              onSuccess: () => {
                setFile(null);
                if (input.current) input.current.value = '';
              },
            });
          }}
        >
          <label className="flex flex-col gap-1.5">
            <span className="text-sm font-semibold tracking-wide text-graphite-200 uppercase">
              File to attach
            </span>
            <input
              ref={input}
              type="file"
              aria-describedby={hintId}
              accept=".png,.jpg,.jpeg,.pdf,.csv,.txt,.zip,image/png,image/jpeg,application/pdf,text/csv,text/plain,application/zip"
              className="min-h-target text-graphite-100 file:mr-3 file:min-h-target file:border-0 file:bg-graphite-800 file:px-4 file:text-graphite-50"
              onChange={(e) => {
                const f = e.target.files?.[0] ?? null;
                setFile(f);
                setTooBig(!!f && f.size > ATTACHMENT_LIMIT_BYTES);
                add.reset();
              }}
            />
          </label>
          <p id={hintId} className="text-sm text-graphite-300">
            {ATTACHMENT_KINDS_TEXT}, up to {LIMIT_MB} MB each. The server checks what the file really is, not
            its name.
          </p>
          {tooBig ? (
            <Alert tone="fault" title="Too large">
              This file is {formatSize(file!.size)}; one attachment may be at most {LIMIT_MB} MB.
            </Alert>
          ) : null}
          {add.isError ? (
            <Alert tone="fault" title="Not attached">
              {add.error.message}
            </Alert>
          ) : null}
          {add.isSuccess ? (
            <p className="text-sm text-graphite-200" role="status">
              Attached {add.data.fileName}.
            </p>
          ) : null}
          <div>
            <Button type="submit" variant="primary" busy={add.isPending} disabled={!file || tooBig}>
              Attach file
            </Button>
          </div>
        </form>
      )}
      {removing ? <RemoveDialog caseId={inv.id} file={removing} onClose={() => setRemoving(null)} /> : null}
    </Panel>
  );
}
