import type { Health } from '#shared/schemas/health';
import { Alert, Loading } from '#src/components/ui/alert';
import { StatusChip } from '#src/components/ui/status-chip';
import { useHealth } from '../api/health';

function StatusWord({ ok }: { ok: boolean }) {
  return <StatusChip tone={ok ? 'ok' : 'fault'}>{ok ? 'Working' : 'Down'}</StatusChip>;
}

function Figure({ label, value, unit }: { label: string; value: number | null; unit?: string }) {
  return (
    <div className="flex flex-col border-l-2 border-graphite-600 pl-3">
      <dt className="text-sm tracking-wider text-graphite-400 uppercase">{label}</dt>
      <dd className="text-2xl font-semibold text-graphite-50 tabular-nums">
        {value === null ? '—' : value}
        {value !== null && unit ? (
          <span className="ml-1 text-base font-normal text-graphite-400">{unit}</span>
        ) : null}
      </dd>
    </div>
  );
}

/** Overall state in one line, for the overview page. */
export function HealthSummary() {
  const health = useHealth();
  if (health.isPending) return <Loading label="Asking the server…" />;
  if (health.isError) {
    return (
      <Alert tone="fault" title="Server not answering">
        {health.error.message}
      </Alert>
    );
  }
  const h = health.data;
  return (
    <div className="flex flex-col gap-3" data-testid="health-summary">
      <p className="flex flex-wrap items-center gap-3 text-lg">
        <StatusChip tone={h.status === 'ok' ? 'ok' : 'warn'}>
          {h.status === 'ok' ? 'All systems working' : 'Degraded'}
        </StatusChip>
        <span className="text-graphite-400">Version {h.version}</span>
      </p>
      <ul className="flex flex-col gap-2 text-graphite-200">
        <li className="flex items-center justify-between gap-3">
          Database <StatusWord ok={h.database.ok} />
        </li>
        <li className="flex items-center justify-between gap-3">
          Job queue <StatusWord ok={h.queue.ok} />
        </li>
      </ul>
    </div>
  );
}

/** The full report, for the admin System screen. */
export function HealthDetails() {
  const health = useHealth();
  if (health.isPending) return <Loading label="Asking the server…" />;
  if (health.isError) {
    return (
      <Alert tone="fault" title="Server not answering">
        {health.error.message}
      </Alert>
    );
  }
  return <HealthReport health={health.data} updatedAt={health.dataUpdatedAt} />;
}

function HealthReport({ health, updatedAt }: { health: Health; updatedAt: number }) {
  return (
    <div className="flex flex-col gap-6">
      <div className="flex flex-wrap items-center gap-4">
        <StatusChip tone={health.status === 'ok' ? 'ok' : 'warn'}>
          {health.status === 'ok' ? 'All systems working' : 'Degraded'}
        </StatusChip>
        <span className="text-graphite-300">
          Version <span className="font-mono text-graphite-100">{health.version}</span>
        </span>
        <span className="text-graphite-400">
          Checked {new Date(updatedAt).toLocaleTimeString('en-GB')} · refreshes every 15 s
        </span>
      </div>
      <div className="grid gap-6 md:grid-cols-2">
        <section className="chamfer p-5" aria-labelledby="health-db">
          <div className="mb-4 flex items-center justify-between gap-3">
            <h3 id="health-db" className="text-lg font-semibold">
              Database
            </h3>
            <StatusWord ok={health.database.ok} />
          </div>
          <dl className="grid grid-cols-2 gap-4">
            <Figure
              label="Round trip"
              value={
                health.database.latencyMs === null ? null : Math.round(health.database.latencyMs * 10) / 10
              }
              unit="ms"
            />
          </dl>
          {health.database.error ? (
            <p className="mt-4 font-mono text-sm text-fault">{health.database.error}</p>
          ) : null}
        </section>
        <section className="chamfer p-5" aria-labelledby="health-queue">
          <div className="mb-4 flex items-center justify-between gap-3">
            <h3 id="health-queue" className="text-lg font-semibold">
              Job queue
            </h3>
            <StatusWord ok={health.queue.ok} />
          </div>
          <dl className="grid grid-cols-3 gap-4">
            <Figure label="Waiting" value={health.queue.queued} />
            <Figure label="Running" value={health.queue.active} />
            <Figure label="Failed" value={health.queue.failed} />
          </dl>
          {health.queue.error ? (
            <p className="mt-4 font-mono text-sm text-fault">{health.queue.error}</p>
          ) : null}
        </section>
      </div>
    </div>
  );
}
