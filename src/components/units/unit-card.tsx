import type { UnitView } from '#shared/schemas/units';
import { StatusChip } from '../ui/status-chip';
import { UNIT_STATUS_LABELS, UNIT_STATUS_TONES } from './unit-status';
import { formatCounts } from '../calibrations/calibration-format';
import { formatOffsetDeg } from '#shared/wording';

/** Attempts as dots: filled ones used, hollow ones left; the numbers say the same in words. */
function AttemptDots({ used, max }: { used: number; max: number | null }) {
  const total = Math.max(max ?? used, used);
  if (total === 0 || total > 12) return null;
  return (
    <span aria-hidden className="flex gap-1.5">
      {Array.from({ length: total }, (_, i) => (
        <span
          key={i}
          className={`inline-block size-3.5 rotate-45 border-2 ${i < used ? 'border-copper-300 bg-copper-300' : 'border-graphite-500'}`}
        />
      ))}
    </span>
  );
}

type UnitCardProps = { unit: UnitView; compact?: boolean };

/** Who the unit is and where it stands: serial, model, lots, status, attempts, hold and flags. */
export function UnitCard({ unit, compact = false }: UnitCardProps) {
  const lots = [
    ['Hall board', unit.lots.hallBoard],
    ['Magnet ring', unit.lots.magnetRing],
    ['Stator', unit.lots.stator],
  ] as const;
  return (
    <article
      aria-label={`Unit ${unit.serial}`}
      data-testid="unit-card"
      className="chamfer chamfer-lg flex flex-col gap-3 p-5 [--ch-edge:var(--color-graphite-600)] [--ch-fill:var(--color-graphite-900)]"
    >
      <div className="flex flex-wrap items-start justify-between gap-3">
        <div className="flex min-w-0 flex-col">
          <span className="text-sm font-semibold tracking-widest text-graphite-400 uppercase">Unit</span>
          <span
            className={`font-mono font-bold break-all text-graphite-50 ${compact ? 'text-2xl' : 'text-3xl'}`}
            data-testid="unit-serial"
          >
            {unit.serial}
          </span>
        </div>
        <div className="flex flex-col items-end gap-1.5" data-testid="unit-status">
          <StatusChip tone={UNIT_STATUS_TONES[unit.status]}>{UNIT_STATUS_LABELS[unit.status]}</StatusChip>
          {unit.programmingMismatch ? <StatusChip tone="fault">Programming mismatch</StatusChip> : null}
        </div>
      </div>
      <dl className="grid grid-cols-[auto_1fr] gap-x-5 gap-y-1.5 text-base">
        <dt className="text-graphite-400">Model</dt>
        <dd className="font-semibold text-graphite-50">
          {unit.model.code} <span className="font-normal text-graphite-300">· {unit.model.name}</span>
        </dd>
        <dt className="text-graphite-400">Attempts</dt>
        <dd className="flex items-center gap-3" data-testid="unit-attempts">
          <span className="font-semibold text-graphite-50">
            {unit.attempts} of {unit.maxAttempts ?? '—'}
          </span>
          <AttemptDots used={unit.attempts} max={unit.maxAttempts} />
        </dd>
        {unit.currentOffsetDeg !== null ? (
          <>
            <dt className="text-graphite-400">Offset on file</dt>
            <dd className="font-mono text-graphite-100">
              {formatOffsetDeg(unit.currentOffsetDeg)} · {formatCounts(unit.currentOffsetCounts)}
            </dd>
          </>
        ) : null}
        {unit.workOrder ? (
          <>
            <dt className="text-graphite-400">Work order</dt>
            <dd className="font-mono">{unit.workOrder}</dd>
          </>
        ) : null}
        {lots.map(([label, value]) => (
          <div key={label} className="contents">
            <dt className="text-graphite-400">{label} lot</dt>
            <dd className="font-mono">{value ?? <span className="text-graphite-400">not recorded</span>}</dd>
          </div>
        ))}
      </dl>
      {unit.status === 'on_hold' ? (
        <div className="flex gap-3 border-l-4 border-warn bg-warn-deep p-3" role="status">
          <svg width="18" height="18" viewBox="0 0 12 12" aria-hidden className="mt-0.5 shrink-0 text-warn">
            <path d="M6 0.8 11.4 11H0.6Z" fill="currentColor" />
          </svg>
          <p>
            <span className="font-semibold text-graphite-50">On hold: </span>
            {(unit.holdReason ?? 'no reason recorded').replace(/\.$/, '')}. Do not measure again; set it aside
            for quality.
          </p>
        </div>
      ) : null}
    </article>
  );
}
