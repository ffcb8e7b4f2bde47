import { useState } from 'react';
import { Link } from 'react-router';
import { Alert, Loading } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { TextAreaField, TextField } from '#src/components/ui/field';
import { Panel } from '#src/components/ui/panel';
import { StatusChip } from '#src/components/ui/status-chip';
import { formatDateTime } from '#src/lib/format';
import { useCreateInvestigation, useInvestigations } from '../api/quality';
import { INVESTIGATION_STATUS_LABELS } from './quality-format';

const STATUS_TONES = { open: 'warn', contained: 'neutral', closed: 'ok' } as const;

function NewInvestigationForm() {
  const create = useCreateInvestigation();
  const [title, setTitle] = useState('');
  const [customerRef, setCustomerRef] = useState('');
  const [receivedOn, setReceivedOn] = useState('');
  const [symptom, setSymptom] = useState('');
  return (
    <Panel title="Open an investigation" titleId="new-investigation-title">
      <form
        className="grid gap-4 sm:grid-cols-3"
        onSubmit={(event) => {
          event.preventDefault();
          create.mutate(
            {
              title,
              customerRef: customerRef || undefined,
              receivedOn: receivedOn || undefined,
              symptom: symptom || undefined,
            },
            {
              onSuccess: () => {
                setTitle('');
                setCustomerRef('');
                setReceivedOn('');
                setSymptom('');
              },
            },
          );
        }}
      >
        <TextField
          label="Title"
          required
          minLength={3}
          value={title}
          onChange={(e) => setTitle(e.target.value)}
        />
        <TextField
          label="Customer reference"
          value={customerRef}
          onChange={(e) => setCustomerRef(e.target.value)}
        />
        <TextField
          label="Received on"
          type="date"
          value={receivedOn}
          onChange={(e) => setReceivedOn(e.target.value)}
        />
        <div className="sm:col-span-3">
          <TextAreaField label="Symptom" value={symptom} onChange={(e) => setSymptom(e.target.value)} />
        </div>
        {create.isError ? (
          <div className="sm:col-span-3">
            <Alert tone="fault" title="The investigation was not opened">
              {create.error.message}
            </Alert>
          </div>
        ) : null}
        <div className="sm:col-span-3">
          <Button type="submit" variant="primary" busy={create.isPending} disabled={title.trim().length < 3}>
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
      {list.isPending ? <Loading label="Reading investigations…" /> : null}
      {list.isError ? (
        <Alert tone="fault" title="Investigations could not be read">
          {list.error.message}
        </Alert>
      ) : null}
      {list.isSuccess && list.data.length === 0 ? (
        <p className="border-l-4 border-copper-400 bg-graphite-850 p-4 text-lg">
          No investigation yet. Open one below, or while holding units from a search.
        </p>
      ) : null}
      {list.isSuccess && list.data.length > 0 ? (
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
            {list.data.map((c) => (
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
      ) : null}
      <NewInvestigationForm />
    </div>
  );
}
