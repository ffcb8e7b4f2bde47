import { useState } from 'react';
import { useForm, type Resolver } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { auditTrailQuerySchema, type AuditTrailQuery } from '#shared/schemas/audit-trail';
import { Button, buttonClass } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { TextField } from '#src/components/ui/field';
import { QueryState } from '#src/components/ui/query-state';
import { formatDateTime, localToInstant } from '#src/lib/format';
import { auditTrailParams, useAuditTrail, type AuditTrailFilters } from '../api/audit';

const EMPTY: AuditTrailFilters = { serial: '', person: '', action: '', from: '', to: '' };
const FILTERS = ['serial', 'person', 'action', 'from', 'to'] as const;

/** "units.held" → "units · held". */
function readableAction(action: string): string {
  const [area, ...rest] = action.split('.');
  return rest.length === 0 ? action.replace(/_/g, ' ') : `${area} · ${rest.join('.').replace(/_/g, ' ')}`;
}

/** The browser's local date-times become instants before the server's schema reads them. */
const queryResolver = zodResolver(auditTrailQuerySchema);
type TrailForm = z.input<typeof auditTrailQuerySchema>;
const resolver: Resolver<TrailForm, unknown, AuditTrailQuery> = (values, context, options) =>
  queryResolver(
    {
      ...values,
      from: localToInstant(String(values.from ?? '')),
      to: localToInstant(String(values.to ?? '')),
    },
    context,
    options,
  );

/**
 * The audit trail as quality reads it: units, investigations, calibrations and recipes, filtered by
 * unit, person, action and time, with names instead of ids; CSV of what the filters find.
 */
export function AuditTrail() {
  const [applied, setApplied] = useState<AuditTrailFilters>(EMPTY);
  const trail = useAuditTrail(applied);
  const form = useForm<TrailForm, unknown, AuditTrailQuery>({ resolver, defaultValues: EMPTY });
  const { errors } = form.formState;
  // The server's own query schema checks the filters; what it keeps (a serial in its one spelling, instants
  // with their zone) is what is asked for.
  const submit = form.handleSubmit((q) =>
    setApplied(
      Object.fromEntries(
        FILTERS.flatMap((k) => (q[k] === undefined ? [] : [[k, String(q[k])]])),
      ) as AuditTrailFilters,
    ),
  );
  const filtered = Object.values(applied).some((v) => v !== '');
  return (
    <div className="flex flex-col gap-5">
      <form
        onSubmit={submit}
        noValidate
        aria-label="Audit trail filters"
        className="grid gap-4 sm:grid-cols-2 lg:grid-cols-5"
      >
        <TextField label="Unit serial" error={errors.serial?.message} {...form.register('serial')} />
        <TextField
          label="Person (part of the name)"
          error={errors.person?.message}
          {...form.register('person')}
        />
        <TextField
          label="Action"
          placeholder="units.held"
          error={errors.action?.message}
          {...form.register('action')}
        />
        <TextField
          label="From"
          type="datetime-local"
          error={errors.from?.message}
          {...form.register('from')}
        />
        <TextField label="Until" type="datetime-local" error={errors.to?.message} {...form.register('to')} />
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
      <QueryState
        query={trail}
        pending="Reading the audit trail…"
        failed="The audit trail could not be read"
        isEmpty={(entries) => entries.length === 0}
        empty={
          <p className="border-l-4 border-copper-400 bg-graphite-850 p-4 text-lg" data-testid="trail-empty">
            {filtered
              ? 'No entry matches these filters. Check the serial or the name, or widen the time range.'
              : 'The audit trail is empty.'}
          </p>
        }
      >
        {(entries) => (
          <>
            <p className="text-graphite-400" aria-live="polite" data-testid="trail-count">
              {entries.length} entries, newest first. The log is append-only: nothing here can be changed.
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
                {entries.map((e) => (
                  <tr key={e.id} className="align-top hover:bg-graphite-850">
                    <Td className="whitespace-nowrap tabular-nums">{formatDateTime(e.at)}</Td>
                    <Td>{e.actorName ?? <span className="text-graphite-400">the line (automatic)</span>}</Td>
                    <Td className="font-semibold">{readableAction(e.action)}</Td>
                    <Td>
                      {e.subjectLabel ?? <span className="text-graphite-300">{e.subjectType ?? '—'}</span>}
                      {e.subjectLabel ? (
                        <div className="text-sm text-graphite-400">{e.subjectType}</div>
                      ) : null}
                    </Td>
                    <Td className="max-w-md">{e.reason ?? '—'}</Td>
                  </tr>
                ))}
              </tbody>
            </TableFrame>
          </>
        )}
      </QueryState>
    </div>
  );
}
