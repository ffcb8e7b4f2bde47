import type { UnitDetail } from '#shared/schemas/units';
import { Alert } from '#src/components/ui/alert';
import { QueryState } from '#src/components/ui/query-state';
import { Panel } from '#src/components/ui/panel';
import { formatDateTime } from '#src/lib/format';
import { useModels } from '#src/lib/queries/models';
import { useUnit } from '#src/lib/queries/units';
import { CalibrationHistory } from './calibration-history';
import { CalibrationResult } from '#src/components/calibrations/calibration-result';
import { UnitCard } from '#src/components/units/unit-card';
import { UnitSearch } from './unit-search';

function TravelerList({ detail }: { detail: UnitDetail }) {
  const serial = encodeURIComponent(detail.unit.serial);
  if (detail.travelers.length === 0)
    return (
      <p className="text-graphite-400">
        No traveler stored yet: one is made when a calibration commits, or when an older result&apos;s
        traveler is first printed.
      </p>
    );
  return (
    <ul className="flex flex-col gap-1" data-testid="traveler-list">
      {detail.travelers.map((t, i) => (
        <li key={t.id}>
          <a
            href={`/api/units/${serial}/travelers/${t.id}`}
            target="_blank"
            rel="noreferrer"
            className="flex min-h-target flex-wrap items-center gap-x-3 px-1"
          >
            <span className="font-semibold">
              {t.printNumber === 1 ? 'Print 1' : `Reprint ${t.printNumber - 1}`} ·{' '}
              {t.pageSize === 'A4' ? 'A4' : 'US Letter'}
            </span>
            <span className="text-sm text-graphite-400">{formatDateTime(t.createdAt)}</span>
            {i === 0 ? <span className="text-sm text-copper-200">newest</span> : null}
          </a>
          <span className="block px-1 font-mono text-xs break-all text-graphite-400">sha256 {t.sha256}</span>
        </li>
      ))}
    </ul>
  );
}

/** One unit's record: who it is, its latest result, every calibration and every traveler printed. */
export function UnitPage({ serial }: { serial: string }) {
  const unit = useUnit(serial);
  return (
    <QueryState
      query={unit}
      pending={`Looking up ${serial}…`}
      failed={`Could not look up ${serial}`}
      isEmpty={(detail) => detail === null}
      empty={
        <div className="flex max-w-xl flex-col gap-4">
          <Alert tone="info" title="No such unit">
            No unit with the serial <span className="font-mono">{serial}</span> is registered. Check the label
            and search again.
          </Alert>
          <UnitSearch initial={serial} autoFocus />
        </div>
      }
    >
      {(detail) => <UnitRecord detail={detail!} />}
    </QueryState>
  );
}

function UnitRecord({ detail }: { detail: UnitDetail }) {
  const models = useModels();
  const model = models.data?.find((m) => m.id === detail.unit.model.id) ?? null;
  const latest = detail.calibrations.find((c) => c.purpose === 'station');
  return (
    <div className="flex flex-col gap-6">
      <div className="grid items-start gap-6 lg:grid-cols-[22rem_minmax(0,1fr)]">
        <div className="flex flex-col gap-4">
          <UnitCard unit={detail.unit} />
          <Panel title="Travelers" titleId="travelers-title">
            <TravelerList detail={detail} />
          </Panel>
        </div>
        {latest ? (
          <CalibrationResult
            calibration={latest}
            model={model}
            fresh={false}
            held={detail.unit.status === 'on_hold'}
          />
        ) : (
          <p className="text-lg text-graphite-300">Not measured yet.</p>
        )}
      </div>
      <section aria-labelledby="history-title" className="flex flex-col gap-3">
        <h2 id="history-title" className="text-2xl font-semibold">
          Calibration history
        </h2>
        <CalibrationHistory calibrations={detail.calibrations} />
      </section>
    </div>
  );
}
