import { StatusChip } from '#src/components/ui/status-chip';
import { formatDateTime } from '#src/lib/format';
import { useStationHealth } from '../api/stations';
import type { EventsConnection } from '../api/use-station-events';

function secondsAgo(seconds: number | null): string {
  if (seconds === null) return 'never';
  if (seconds < 60) return `${seconds} s ago`;
  if (seconds < 3600) return `${Math.floor(seconds / 60)} min ago`;
  return `${Math.floor(seconds / 3600)} h ago`;
}

/** Is the station talking to us, and is the job queue keeping up: refreshed every ten seconds. */
export function StationHealth({
  stationId,
  connection,
}: {
  stationId: string;
  connection: EventsConnection;
}) {
  const health = useStationHealth(stationId);
  const h = health.data;
  return (
    <section aria-labelledby="health-title" className="flex flex-col gap-2" data-testid="station-health">
      <h2 id="health-title" className="text-sm font-semibold tracking-widest text-graphite-400 uppercase">
        Station health
      </h2>
      <div className="flex flex-wrap gap-2">
        {h ? (
          <StatusChip tone={h.online ? 'ok' : 'fault'}>
            {h.online ? 'Station online' : 'Station offline'}
          </StatusChip>
        ) : (
          <StatusChip tone="neutral">{health.isError ? 'Health unknown' : 'Checking…'}</StatusChip>
        )}
        <StatusChip tone={connection === 'live' ? 'ok' : 'warn'}>
          {connection === 'live'
            ? 'Live updates'
            : connection === 'connecting'
              ? 'Connecting…'
              : 'Reconnecting…'}
        </StatusChip>
      </div>
      {h ? (
        <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-0.5 text-sm">
          <dt className="text-graphite-400">Last heartbeat</dt>
          <dd className="text-graphite-100" title={formatDateTime(h.lastSeenAt)}>
            {secondsAgo(h.secondsSinceSeen)}
          </dd>
          <dt className="text-graphite-400">Job queue</dt>
          <dd className="text-graphite-100">
            {h.queue.waiting} waiting · {h.queue.active} running ·{' '}
            <span className={h.queue.failed > 0 ? 'font-semibold text-warn' : ''}>
              {h.queue.failed} failed
            </span>
          </dd>
        </dl>
      ) : null}
    </section>
  );
}
