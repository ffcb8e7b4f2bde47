import { useState } from 'react';
import {
  TIMELINE_KIND_LABELS,
  TIMELINE_KINDS,
  type TimelineEntry,
  type TimelineKind,
} from '#shared/schemas/unit-record';
import { Alert, Loading } from '#src/components/ui/alert';
import { buttonClass } from '#src/components/ui/button';
import { Panel } from '#src/components/ui/panel';
import { StatusChip, type Tone } from '#src/components/ui/status-chip';
import { formatDateTime } from '#src/lib/format';
import { unitRecordExportUrl, useRefreshUnitRecord, useUnitRecord } from '../api/unit-record';

const TONES: Record<TimelineEntry['tone'], Tone> = {
  good: 'ok',
  bad: 'fault',
  warn: 'warn',
  neutral: 'neutral',
};

function Entry({ entry }: { entry: TimelineEntry }) {
  return (
    <li className="grid gap-x-5 gap-y-1 border-b border-graphite-800 py-3 sm:grid-cols-[13rem_1fr]">
      <div className="flex flex-col items-start gap-1">
        <time dateTime={entry.at} className="text-sm text-graphite-300 tabular-nums">
          {formatDateTime(entry.at)}
        </time>
        <StatusChip tone={TONES[entry.tone]}>{TIMELINE_KIND_LABELS[entry.kind]}</StatusChip>
      </div>
      <div className="flex min-w-0 flex-col gap-1">
        <p className="font-semibold break-words text-graphite-50">{entry.title}</p>
        <p className="text-sm text-graphite-300">{entry.who ? <>by {entry.who}</> : 'nobody recorded'}</p>
        {entry.failedChecks.length ? (
          <p className="text-sm text-fault-bright">Failed: {entry.failedChecks.join(' · ')}</p>
        ) : null}
        {entry.details.length ? (
          <dl className="flex flex-wrap gap-x-5 gap-y-0.5 text-sm">
            {entry.details.map((d) => (
              <div key={d.label} className="flex min-w-0 gap-1.5">
                <dt className="text-graphite-400">{d.label}</dt>
                <dd className="min-w-0 break-all text-graphite-200">{d.value}</dd>
              </div>
            ))}
          </dl>
        ) : null}
      </div>
    </li>
  );
}

/**
 * A unit's whole record for quality: everything that happened to it in time order (registration,
 * measurements, calibrations, programming, holds and releases, travelers and prints, investigations,
 * qualification, audit entries), and the export of the record as a PDF and a ZIP with the raw files.
 */
export function UnitTimeline({ serial }: { serial: string }) {
  const record = useUnitRecord(serial);
  const refresh = useRefreshUnitRecord(serial);
  const [hidden, setHidden] = useState<ReadonlySet<TimelineKind>>(new Set());
  if (record.isPending) return <Loading label="Reading the unit's record…" />;
  if (record.isError)
    return (
      <Alert tone="fault" title="The unit's record could not be read">
        {record.error.message}
      </Alert>
    );
  const { timeline } = record.data;
  const present = TIMELINE_KINDS.filter((k) => timeline.some((e) => e.kind === k));
  const shown = timeline.filter((e) => !hidden.has(e.kind));
  const toggle = (k: TimelineKind) =>
    setHidden((h) => {
      const next = new Set(h);
      if (next.has(k)) next.delete(k);
      else next.add(k);
      return next;
    });
  return (
    <Panel
      title="Unit record: everything that happened"
      titleId="unit-record-title"
      actions={
        <>
          <a
            className={buttonClass('primary')}
            href={unitRecordExportUrl(serial, 'zip')}
            download
            onClick={refresh}
          >
            Export record (PDF + raw files, ZIP)
          </a>
          <a
            className={buttonClass('secondary')}
            href={unitRecordExportUrl(serial, 'pdf')}
            target="_blank"
            rel="noreferrer"
            onClick={refresh}
          >
            Open the PDF record
          </a>
        </>
      }
    >
      <div className="flex flex-col gap-4" data-testid="unit-record">
        <p className="max-w-3xl text-graphite-300">
          Oldest first. The ZIP holds the PDF calibration record, every measurement exactly as the station
          posted it, and a SHA-256 sum of every file (<span className="font-mono">SHA256SUMS.txt</span>, which{' '}
          <span className="font-mono">sha256sum -c</span> checks). Each export is written to the audit log.
        </p>
        <fieldset className="flex flex-wrap gap-x-5">
          <legend className="mb-1 text-sm font-semibold text-graphite-300">Show</legend>
          {present.map((k) => (
            <label key={k} className="flex min-h-target cursor-pointer items-center gap-2">
              <input
                type="checkbox"
                className="size-5 accent-copper-400"
                checked={!hidden.has(k)}
                onChange={() => toggle(k)}
              />
              {TIMELINE_KIND_LABELS[k]} ({timeline.filter((e) => e.kind === k).length})
            </label>
          ))}
        </fieldset>
        <p data-testid="timeline-count" className="text-sm text-graphite-400">
          {shown.length === timeline.length
            ? `${timeline.length} events`
            : `${shown.length} of ${timeline.length} events shown`}
        </p>
        {shown.length === 0 ? (
          <p className="text-graphite-300">Nothing to show: tick a kind of event above.</p>
        ) : (
          <ol data-testid="unit-timeline" aria-labelledby="unit-record-title">
            {shown.map((e, i) => (
              <Entry key={`${e.at}-${e.kind}-${i}`} entry={e} />
            ))}
          </ol>
        )}
      </div>
    </Panel>
  );
}
