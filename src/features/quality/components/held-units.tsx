import { useState } from 'react';
import { Link } from 'react-router';
import { Alert, Loading } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { formatDateTime } from '#src/lib/format';
import { useHeldUnits } from '../api/quality';
import { holdAge } from './quality-format';
import { ReleaseDialog } from './release-dialog';

/** The workspace's first view: every unit on hold, oldest first, with a release for one or many. */
export function HeldUnits() {
  const held = useHeldUnits();
  const [selected, setSelected] = useState<Set<string>>(new Set());
  const [releasing, setReleasing] = useState<string[] | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  if (held.isPending) return <Loading label="Reading the units on hold…" />;
  if (held.isError)
    return (
      <Alert tone="fault" title="The held units could not be read">
        {held.error.message}
      </Alert>
    );
  const rows = held.data;
  const present = [...selected].filter((s) => rows.some((r) => r.serial === s));
  const toggle = (serial: string) =>
    setSelected((prev) => {
      const next = new Set(prev);
      if (next.has(serial)) next.delete(serial);
      else next.add(serial);
      return next;
    });
  return (
    <div className="flex flex-col gap-4">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <p className="text-lg" aria-live="polite" data-testid="held-count">
          {rows.length === 0
            ? 'No unit is on hold.'
            : `${rows.length} unit${rows.length === 1 ? '' : 's'} on hold, the longest held first.`}
        </p>
        <Button variant="primary" disabled={present.length === 0} onClick={() => setReleasing(present)}>
          Release {present.length || ''} selected
        </Button>
      </div>
      {notice ? (
        <Alert tone="ok" title="Done">
          {notice}
        </Alert>
      ) : null}
      {rows.length === 0 ? (
        <p className="border-l-4 border-copper-400 bg-graphite-850 p-4 text-lg" data-testid="held-empty">
          Nothing is held right now. Units held by a person, by the retest policy or by a programming
          read-back mismatch appear here.
        </p>
      ) : (
        <TableFrame caption="Units on hold, the longest held first">
          <thead>
            <tr>
              <Th>
                <span className="sr-only">Select</span>
              </Th>
              <Th>Serial</Th>
              <Th>On hold for</Th>
              <Th>Reason</Th>
              <Th>Held by</Th>
              <Th>Investigation</Th>
              <Th>
                <span className="sr-only">Release</span>
              </Th>
            </tr>
          </thead>
          <tbody data-testid="held-rows">
            {rows.map((h) => (
              <tr key={h.holdId} className="hover:bg-graphite-850">
                <Td>
                  <label className="flex size-target cursor-pointer items-center justify-center">
                    <input
                      type="checkbox"
                      className="size-5 accent-copper-400"
                      checked={selected.has(h.serial)}
                      onChange={() => toggle(h.serial)}
                      aria-label={`Select ${h.serial}`}
                    />
                  </label>
                </Td>
                <Td>
                  <Link
                    to={`/units/${encodeURIComponent(h.serial)}`}
                    className="inline-flex min-h-target items-center font-mono font-semibold"
                  >
                    {h.serial}
                  </Link>
                  <div className="text-sm text-graphite-400">{h.modelCode}</div>
                </Td>
                <Td className="whitespace-nowrap">
                  <span className="font-semibold tabular-nums">{holdAge(h.ageHours)}</span>
                  <div className="text-sm text-graphite-400">since {formatDateTime(h.heldAt)}</div>
                </Td>
                <Td className="max-w-md">{h.reason}</Td>
                <Td>{h.heldBy ?? <span className="text-graphite-400">not recorded</span>}</Td>
                <Td>
                  {h.investigation ? (
                    <Link
                      to={`/quality/investigations/${h.investigation.id}`}
                      className="inline-flex min-h-target flex-col justify-center"
                    >
                      <span className="font-semibold">{h.investigation.reference}</span>
                      <span className="text-sm">{h.investigation.title}</span>
                    </Link>
                  ) : (
                    <span className="text-graphite-400">none</span>
                  )}
                </Td>
                <Td>
                  <Button onClick={() => setReleasing([h.serial])}>Release…</Button>
                </Td>
              </tr>
            ))}
          </tbody>
        </TableFrame>
      )}
      <ReleaseDialog
        serials={releasing ?? []}
        open={releasing !== null}
        onClose={() => setReleasing(null)}
        onDone={(m) => {
          setNotice(m);
          setSelected(new Set());
        }}
      />
    </div>
  );
}
