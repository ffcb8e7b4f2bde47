import { useState } from 'react';
import { Link } from 'react-router';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { newInvestigationSchema, type NewInvestigation } from '#shared/schemas/quality';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { TextAreaField, TextField } from '#src/components/ui/field';
import { Panel } from '#src/components/ui/panel';
import { QueryState } from '#src/components/ui/query-state';
import { StatusChip } from '#src/components/ui/status-chip';
import { applyServerErrors } from '#src/lib/form-errors';
import { formatDateTime } from '#src/lib/format';
import { useCreateInvestigation, useInvestigations } from '../api/quality';
import { INVESTIGATION_STATUS_LABELS } from './quality-format';

const STATUS_TONES = { open: 'warn', contained: 'neutral', closed: 'ok' } as const;

const NEW_FIELDS = ['title', 'customerRef', 'receivedOn', 'symptom'] as const;
const NO_CASE = { title: '', customerRef: '', receivedOn: '', symptom: '' };

function NewInvestigationForm() {
  const create = useCreateInvestigation();
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<z.input<typeof newInvestigationSchema>, unknown, NewInvestigation>({
    resolver: zodResolver(newInvestigationSchema),
    defaultValues: NO_CASE,
  });
  const { errors } = form.formState;
  const submit = form.handleSubmit(async (body) => {
    setBanner(null);
    try {
      await create.mutateAsync(body);
      form.reset(NO_CASE);
    } catch (error) {
      setBanner(applyServerErrors(error, form.setError, NEW_FIELDS));
    }
  });
  return (
    <Panel title="Open an investigation" titleId="new-investigation-title">
      <form className="grid gap-4 sm:grid-cols-3" onSubmit={submit} noValidate>
        <TextField label="Title" required error={errors.title?.message} {...form.register('title')} />
        <TextField
          label="Customer reference"
          error={errors.customerRef?.message}
          {...form.register('customerRef')}
        />
        <TextField
          label="Received on"
          type="date"
          error={errors.receivedOn?.message}
          {...form.register('receivedOn')}
        />
        <div className="sm:col-span-3">
          <TextAreaField label="Symptom" error={errors.symptom?.message} {...form.register('symptom')} />
        </div>
        {banner ? (
          <div className="sm:col-span-3">
            <Alert tone="fault" title="The investigation was not opened">
              {banner}
            </Alert>
          </div>
        ) : null}
        <div className="sm:col-span-3">
          <Button type="submit" variant="primary" busy={create.isPending}>
            Open investigation
          </Button>
          <span className="ml-3 text-sm text-graphite-400">The quality group gets an e-mail.</span>
        </div>
      </form>
    </Panel>
  );
}

/** Every case, newest first, and a form to open one. */
export function Investigations() {
  const list = useInvestigations();
  return (
    <div className="flex flex-col gap-5">
      <QueryState
        query={list}
        pending="Reading investigations…"
        failed="Investigations could not be read"
        isEmpty={(cases) => cases.length === 0}
        empty={
          <p className="border-l-4 border-copper-400 bg-graphite-850 p-4 text-lg">
            No investigation yet. Open one below, or while holding units from a search.
          </p>
        }
      >
        {(cases) => (
          <TableFrame caption="Investigations, newest first">
            <thead>
              <tr>
                <Th>Case</Th>
                <Th>Status</Th>
                <Th>Customer reference</Th>
                <Th>Units</Th>
                <Th>Opened</Th>
              </tr>
            </thead>
            <tbody data-testid="investigation-rows">
              {cases.map((c) => (
                <tr key={c.id} className="hover:bg-graphite-850">
                  <Td>
                    <Link
                      to={`/quality/investigations/${c.id}`}
                      className="inline-flex min-h-target flex-col justify-center"
                    >
                      <span className="font-semibold">{c.reference}</span>
                      <span>{c.title}</span>
                    </Link>
                  </Td>
                  <Td>
                    <StatusChip tone={STATUS_TONES[c.status]}>
                      {INVESTIGATION_STATUS_LABELS[c.status]}
                    </StatusChip>
                  </Td>
                  <Td>{c.customerRef ?? <span className="text-graphite-400">none</span>}</Td>
                  <Td className="tabular-nums">{c.unitCount}</Td>
                  <Td>
                    {formatDateTime(c.createdAt)}
                    <div className="text-sm text-graphite-400">by {c.openedBy ?? 'unknown'}</div>
                  </Td>
                </tr>
              ))}
            </tbody>
          </TableFrame>
        )}
      </QueryState>
      <NewInvestigationForm />
    </div>
  );
}
