import { useMemo, useState } from 'react';
import type { AuditEntry } from '#shared/schemas/audit';
import { Alert, Loading } from '#src/components/ui/alert';
import { SelectField, TextField } from '#src/components/ui/field';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { formatDateTime } from '#src/lib/format';
import { useAuditLog } from '../api/audit';

const LIMITS = [50, 200, 1000] as const;

/** "auth.sign_in_failed" → "auth · sign in failed": the code stays recognisable, the words readable. */
function readableAction(action: string): string {
  const [area, ...rest] = action.split('.');
  return rest.length === 0 ? action.replace(/_/g, ' ') : `${area} · ${rest.join('.').replace(/_/g, ' ')}`;
}

function hasDetail(entry: AuditEntry): boolean {
  return entry.before !== null || entry.after !== null;
}

function ChangeDetail({ entry }: { entry: AuditEntry }) {
  return (
    <details className="group">
      <summary className="inline-flex min-h-target cursor-pointer items-center gap-2 text-copper-200 hover:text-copper-100">
        <span aria-hidden className="inline-block transition-transform group-open:rotate-90">
          ▸
        </span>
        Before and after
      </summary>
      <div className="mt-2 grid gap-3 md:grid-cols-2">
        {(['before', 'after'] as const).map((side) => (
          <div key={side} className="flex flex-col gap-1">
            <span className="text-sm tracking-wider text-graphite-400 uppercase">{side}</span>
            <pre className="max-h-72 overflow-auto border border-graphite-700 bg-graphite-950 p-3 font-mono text-sm text-graphite-200">
              {entry[side] === null ? '—' : JSON.stringify(entry[side], null, 2)}
            </pre>
          </div>
        ))}
      </div>
    </details>
  );
}

export function AuditLog() {
  const [limit, setLimit] = useState<number>(200);
  const [search, setSearch] = useState('');
  const audit = useAuditLog({ limit });

  const entries = useMemo(() => {
    const needle = search.trim().toLowerCase();
    const all = audit.data ?? [];
    if (!needle) return all;
    return all.filter((e) =>
      [
        e.action,
        readableAction(e.action),
        e.actorName,
        e.subjectLabel,
        e.reason,
        e.subjectType,
        e.subjectId,
        e.ip,
      ].some((v) => v?.toLowerCase().includes(needle)),
    );
  }, [audit.data, search]);

  return (
    <div className="flex flex-col gap-5">
      <div className="flex flex-wrap items-end gap-4">
        <div className="w-full max-w-md">
          <TextField
            label="Search the log"
            type="search"
            placeholder="Action, person, reason…"
            value={search}
            onChange={(event) => setSearch(event.target.value)}
          />
        </div>
        <div className="w-48">
          <SelectField
            label="Newest entries"
            value={String(limit)}
            onChange={(event) => setLimit(Number(event.target.value))}
            options={LIMITS.map((n) => ({ value: String(n), label: `Last ${n}` }))}
          />
        </div>
      </div>
      {audit.isPending ? <Loading label="Reading the audit log…" /> : null}
      {audit.isError ? (
        <Alert tone="fault" title="The audit log could not be read">
          {audit.error.message}
        </Alert>
      ) : null}
      {audit.isSuccess ? (
        <>
          <p className="text-graphite-400" aria-live="polite">
            Showing {entries.length} of the newest {audit.data.length} entries. The log is append-only:
            nothing here can be changed or removed.
          </p>
          {entries.length === 0 && search.trim() ? (
            <p
              className="border-l-4 border-copper-400 bg-graphite-850 p-4 text-lg"
              data-testid="audit-no-match"
            >
              No entry among the newest {audit.data.length} matches “{search.trim()}”. Check the spelling, or
              show more entries.
            </p>
          ) : null}
          <TableFrame caption="Audit log, newest first">
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
              {entries.map((entry) => (
                <tr key={entry.id} className="align-top hover:bg-graphite-850">
                  <Td className="whitespace-nowrap tabular-nums">{formatDateTime(entry.at)}</Td>
                  <Td>
                    {entry.actorName ?? <span className="text-graphite-400">system or anonymous</span>}
                    {entry.ip ? <div className="font-mono text-xs text-graphite-400">{entry.ip}</div> : null}
                  </Td>
                  <Td>
                    <span className="font-semibold">{readableAction(entry.action)}</span>
                    {hasDetail(entry) ? <ChangeDetail entry={entry} /> : null}
                  </Td>
                  <Td className="text-graphite-300">
                    {entry.subjectType ? (
                      <>
                        {entry.subjectLabel ? (
                          <span className="font-semibold text-graphite-100">{entry.subjectLabel}</span>
                        ) : (
                          entry.subjectType
                        )}
                        {entry.subjectLabel ? (
                          <div className="text-sm text-graphite-400">{entry.subjectType}</div>
                        ) : entry.subjectId ? (
                          <div className="font-mono text-xs break-all text-graphite-400">
                            {entry.subjectId}
                          </div>
                        ) : null}
                      </>
                    ) : (
                      '—'
                    )}
                  </Td>
                  <Td className="max-w-sm text-graphite-200">
                    {entry.reason ?? <span className="text-graphite-400">—</span>}
                  </Td>
                </tr>
              ))}
            </tbody>
          </TableFrame>
        </>
      ) : null}
    </div>
  );
}
