import { useState } from 'react';
import { Link } from 'react-router';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import {
  commentSchema,
  investigationUpdateSchema,
  type InvestigationDetail,
  type InvestigationUpdate,
} from '#shared/schemas/quality';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TextAreaField } from '#src/components/ui/field';
import { Panel } from '#src/components/ui/panel';
import { QueryState } from '#src/components/ui/query-state';
import { StatusChip } from '#src/components/ui/status-chip';
import { applyServerErrors } from '#src/lib/form-errors';
import { formatDateTime } from '#src/lib/format';
import { useAddComment, useInvestigation, useUpdateInvestigation } from '../api/quality';
import { InvestigationAttachments } from './investigation-attachments';
import { INVESTIGATION_STATUS_LABELS } from './quality-format';

const TEXT_FIELDS = [
  ['symptom', 'Symptom'],
  ['findings', 'Findings'],
  ['containmentAction', 'Containment action'],
  ['rootCause', 'Root cause'],
  ['correctiveAction', 'Corrective action'],
  ['verification', 'Verification'],
] as const;

const NEXT_STATUS = { open: 'contained', contained: 'closed', closed: null } as const;

const CASE_FIELDS = TEXT_FIELDS.map(([k]) => k);

function CaseFields({ inv }: { inv: InvestigationDetail }) {
  const update = useUpdateInvestigation(inv.id);
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<z.input<typeof investigationUpdateSchema>, unknown, InvestigationUpdate>({
    resolver: zodResolver(investigationUpdateSchema),
    defaultValues: Object.fromEntries(TEXT_FIELDS.map(([k]) => [k, inv[k] ?? ''])),
  });
  const { errors, dirtyFields, isDirty } = form.formState;
  const closed = inv.status === 'closed';
  const next = NEXT_STATUS[inv.status];
  // Only the fields changed here are sent, so a colleague's edit of another field is not overwritten.
  const save = (extra: InvestigationUpdate) =>
    form.handleSubmit(async (values) => {
      setBanner(null);
      const changed = CASE_FIELDS.filter((k) => dirtyFields[k]);
      try {
        await update.mutateAsync({ ...Object.fromEntries(changed.map((k) => [k, values[k]])), ...extra });
        form.reset(form.getValues());
      } catch (error) {
        setBanner(applyServerErrors(error, form.setError, CASE_FIELDS));
      }
    });
  return (
    <Panel title="Case" titleId="case-title">
      <form className="flex flex-col gap-4" onSubmit={save({})} noValidate>
        {TEXT_FIELDS.map(([k, label]) => (
          <TextAreaField
            key={k}
            label={label}
            readOnly={closed}
            error={errors[k]?.message}
            {...form.register(k)}
          />
        ))}
        {banner ? (
          <Alert tone="fault" title="Not saved">
            {banner}
          </Alert>
        ) : null}
        {closed ? (
          <p className="text-graphite-300">
            Closed on {formatDateTime(inv.closedAt)}: the case no longer changes.
          </p>
        ) : (
          <div className="flex flex-wrap gap-3">
            <Button type="submit" busy={update.isPending} disabled={!isDirty}>
              Save changes
            </Button>
            {next ? (
              <Button variant="primary" busy={update.isPending} onClick={save({ status: next })}>
                {next === 'contained' ? 'Mark contained' : 'Close the case'}
              </Button>
            ) : null}
          </div>
        )}
      </form>
    </Panel>
  );
}

function Comments({ inv }: { inv: InvestigationDetail }) {
  const add = useAddComment(inv.id);
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<z.input<typeof commentSchema>, unknown, z.output<typeof commentSchema>>({
    resolver: zodResolver(commentSchema),
    defaultValues: { body: '' },
  });
  const submit = form.handleSubmit(async ({ body }) => {
    setBanner(null);
    try {
      await add.mutateAsync(body);
      form.reset({ body: '' });
    } catch (error) {
      setBanner(applyServerErrors(error, form.setError, ['body']));
    }
  });
  return (
    <Panel title="Comments" titleId="comments-title">
      {inv.comments.length === 0 ? <p className="mb-4 text-graphite-300">No comment yet.</p> : null}
      <ol className="mb-4 flex flex-col gap-3" data-testid="comments">
        {inv.comments.map((c) => (
          <li key={c.id} className="border-l-4 border-graphite-600 pl-3">
            <div className="text-sm text-graphite-400">
              {c.author} · {formatDateTime(c.createdAt)}
            </div>
            <p className="whitespace-pre-wrap">{c.body}</p>
          </li>
        ))}
      </ol>
      <form className="flex flex-col gap-3" onSubmit={submit} noValidate>
        <TextAreaField
          label="Add a comment"
          error={form.formState.errors.body?.message}
          {...form.register('body')}
        />
        {banner ? (
          <Alert tone="fault" title="Not added">
            {banner}
          </Alert>
        ) : null}
        <div>
          <Button type="submit" busy={add.isPending}>
            Add comment
          </Button>
        </div>
      </form>
    </Panel>
  );
}

/** One return or complaint: its fields, status, attachments, linked units and comment thread. */
export function InvestigationPage({ id }: { id: string }) {
  const inv = useInvestigation(id);
  return (
    <QueryState query={inv} pending="Reading the investigation…" failed="The investigation could not be read">
      {(d) => <InvestigationView d={d} />}
    </QueryState>
  );
}

function InvestigationView({ d }: { d: InvestigationDetail }) {
  return (
    <div className="flex flex-col gap-6">
      <div className="flex flex-wrap items-center gap-4">
        <StatusChip tone={d.status === 'closed' ? 'ok' : d.status === 'open' ? 'warn' : 'neutral'}>
          {INVESTIGATION_STATUS_LABELS[d.status]}
        </StatusChip>
        <span>Customer reference: {d.customerRef ?? 'none'}</span>
        <span>Received: {d.receivedOn ?? 'not recorded'}</span>
        <span>
          Opened {formatDateTime(d.createdAt)} by {d.openedBy ?? 'unknown'}
        </span>
      </div>
      <div className="grid items-start gap-6 lg:grid-cols-[minmax(0,2fr)_minmax(0,1fr)]">
        <div className="flex flex-col gap-6">
          <CaseFields key={d.id + d.status} inv={d} />
          <InvestigationAttachments inv={d} />
        </div>
        <div className="flex flex-col gap-6">
          <Panel title={`Linked units (${d.units.length})`} titleId="linked-title">
            {d.units.length === 0 ? (
              <p className="text-graphite-300">
                No unit linked yet: hold units from a search under this case.
              </p>
            ) : (
              <ul className="flex max-h-96 flex-col overflow-y-auto" data-testid="linked-units">
                {d.units.map((u) => (
                  <li key={u.serial}>
                    <Link
                      to={`/units/${encodeURIComponent(u.serial)}`}
                      className="flex min-h-target items-center gap-3"
                    >
                      <span className="font-mono font-semibold">{u.serial}</span>
                      <span className="text-sm text-graphite-300">
                        {u.status === 'on_hold' ? 'on hold' : u.status}
                      </span>
                    </Link>
                  </li>
                ))}
              </ul>
            )}
          </Panel>
          <Comments inv={d} />
        </div>
      </div>
    </div>
  );
}
