import { useState, type FormEvent } from 'react';
import { Alert, Loading } from '#src/components/ui/alert';
import { Button, buttonClass } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { TextField } from '#src/components/ui/field';
import { formatDateTime } from '#src/lib/format';
import { auditTrailParams, useAuditTrail, type AuditTrailFilters } from '../api/audit';

const EMPTY: AuditTrailFilters = { serial: '', person: '', action: '', from: '', to: '' };

/** "units.held" → "units · held". */
function readableAction(action: string): string {
  const [area, ...rest] = action.split('.');
  return rest.length === 0 ? action.replace(/_/g, ' ') : `${area} · ${rest.join('.').replace(/_/g, ' ')}`;
}

const instant = (local: string) => (local ? new Date(local).toISOString() : '');

/**
 * The audit trail as quality reads it: units, investigations, calibrations and recipes, filtered by
 * unit, person, action and time, with names instead of ids; CSV of what the filters find.
 */
export function AuditTrail() {
  const [form, setForm] = useState<AuditTrailFilters>(EMPTY);
  const [applied, setApplied] = useState<AuditTrailFilters>(EMPTY);
  const trail = useAuditTrail(applied);
  const set = (key: string) => (event: { target: { value: string } }) =>
    setForm((f) => ({ ...f, [key]: event.target.value }));
  const submit = (event: FormEvent) => {
    event.preventDefault();
    setApplied({ ...form, from: instant(form.from), to: instant(form.to) });
  };
  const filtered = Object.values(applied).some((v) => v !== '');
  return (
    <div className="flex flex-col gap-5">
      <form
        onSubmit={submit}
        aria-label="Audit trail filters"
        className="grid gap-4 sm:grid-cols-2 lg:grid-cols-5"
      >
        <TextField label="Unit serial" value={form.serial} onChange={set('serial')} />
        <TextField label="Person (part of the name)" value={form.person} onChange={set('person')} />
        <TextField label="Action" value={form.action} onChange={set('action')} placeholder="units.held" />
        <TextField label="From" type="datetime-local" value={form.from} onChange={set('from')} />
        <TextField label="Until" type="datetime-local" value={form.to} onChange={set('to')} />
        <div className="flex flex-wrap gap-3 sm:col-span-2 lg:col-span-5">
          <Button type="submit" variant="primary">
            Show entries
          </Button>
          <a
            className={buttonClass('secondary')}
            href={`/api/audit.csv?${auditTrailParams(applied)}`}
            download
          >
            Export CSV
          </a>
        </div>
      </form>
      {trail.isPending ? <Loading label="Reading the audit trail…" /> : null}
      {trail.isError ? (
        <Alert tone="fault" title="The audit trail could not be read">
          {trail.error.message}
        </Alert>
      ) : null}
      {trail.isSuccess && trail.data.length === 0 ? (
        <p className="border-l-4 border-copper-400 bg-graphite-850 p-4 text-lg" data-testid="trail-empty">
          {filtered
            ? 'No entry matches these filters. Check the serial or the name, or widen the time range.'
            : 'The audit trail is empty.'}
        </p>
      ) : null}
      {trail.isSuccess && trail.data.length > 0 ? (
        <>
          <p className="text-graphite-400" aria-live="polite" data-testid="trail-count">
            {trail.data.length} entries, newest first. The log is append-only: nothing here can be changed.
          </p>
          <TableFrame caption="Audit trail, newest first">
            <thead>
              <tr>
                <Th>When</Th>
                <Th>Who</Th>
                <Th>What</Th>
                <Th>Subject</Th>
                <Th>Why</Th>
              </tr>
            </thead>
            <tbody>
              {trail.data.map((e) => (
                <tr key={e.id} className="align-top hover:bg-graphite-850">
                  <Td className="whitespace-nowrap tabular-nums">{formatDateTime(e.at)}</Td>
                  <Td>{e.actorName ?? <span className="text-graphite-400">the line (automatic)</span>}</Td>
                  <Td className="font-semibold">{readableAction(e.action)}</Td>
                  <Td>
                    {e.subjectLabel ?? <span className="text-graphite-300">{e.subjectType ?? '—'}</span>}
                    {e.subjectLabel ? <div className="text-sm text-graphite-400">{e.subjectType}</div> : null}
                  </Td>
                  <Td className="max-w-md">{e.reason ?? '—'}</Td>
                </tr>
              ))}
            </tbody>
          </TableFrame>
        </>
      ) : null}
    </div>
  );
}
