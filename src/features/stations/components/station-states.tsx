import type { ReactNode } from 'react';
import type { CalibrationView } from '#shared/schemas/calibrations';
import { formatDateTime } from '#src/lib/format';
import { failedChecks } from '#src/components/calibrations/calibration-format';
import { formatOffsetDeg } from '#shared/wording';
import { VerdictMark } from '#src/components/calibrations/verdict-banner';

/** Triangle with a bar: a scan or serial the screen cannot use. */
function WarningShape({ size }: { size: number }) {
  return (
    <svg width={size} height={size} viewBox="0 0 48 48" aria-hidden className="shrink-0">
      <path d="M24 2 46 44H2Z" fill="currentColor" />
      <path d="M24 16v14M24 35v4" stroke="var(--color-graphite-950)" strokeWidth="5" />
    </svg>
  );
}

/** Octagon with a bar across: a unit that must stop here (on hold). */
function HoldShape({ size }: { size: number }) {
  return (
    <svg width={size} height={size} viewBox="0 0 48 48" aria-hidden className="shrink-0">
      <path d="M15 2h18l13 13v18L33 46H15L2 33V15Z" fill="currentColor" />
      <path d="M11 24h26" stroke="var(--color-graphite-950)" strokeWidth="7" />
    </svg>
  );
}

/**
 * A scan problem as large as a verdict: the refused scan or the unknown serial replaces whatever was on
 * screen, in words and in shape, so nobody reads the last unit's result as the answer.
 */
export function ScanProblem({
  title,
  testId,
  children,
}: {
  title: string;
  testId: string;
  children: ReactNode;
}) {
  return (
    <section
      role="alert"
      data-testid={testId}
      className="chamfer chamfer-lg flex flex-col gap-4 p-6 [--ch-edge:var(--color-warn)] [--ch-fill:var(--color-warn-deep)]"
    >
      <div className="flex items-center gap-5 text-warn">
        <WarningShape size={96} />
        <h2 className="text-[5.5rem] leading-none font-bold tracking-[0.03em] uppercase 2xl:text-[7.5rem]">
          {title}
        </h2>
      </div>
      <div className="flex flex-col gap-3 text-2xl text-graphite-50">{children}</div>
    </section>
  );
}

/**
 * A unit on hold, full width and readable from two metres: the state, the reason and what to do with
 * the unit. Automatic holds (attempts used up, a failure that needs repair) look the same as a hold
 * that quality placed.
 */
export function HoldBanner({ reason, action }: { reason: string | null; action: string }) {
  return (
    <section
      aria-labelledby="hold-title"
      data-testid="hold-state"
      className="chamfer chamfer-lg flex flex-col gap-4 p-6 [--ch-edge:var(--color-warn)] [--ch-fill:var(--color-warn-deep)]"
    >
      <div className="flex flex-wrap items-center gap-5 text-warn">
        <HoldShape size={96} />
        <h2
          id="hold-title"
          className="text-[5.5rem] leading-none font-bold tracking-[0.06em] uppercase 2xl:text-[7.5rem]"
        >
          On hold
        </h2>
      </div>
      <p className="text-3xl text-graphite-50" data-testid="hold-reason">
        <span className="font-semibold text-warn-bright">Why: </span>
        {reason ?? 'no reason recorded'}
      </p>
      <p className="text-3xl text-graphite-50" data-testid="hold-action">
        <span className="font-semibold text-warn-bright">What to do: </span>
        {action}
      </p>
    </section>
  );
}

/**
 * A stored result from the unit's history: deliberately smaller than a live verdict, dated and
 * numbered, with no progress, so it is never read as the answer to the spin the operator just made.
 */
export function HistoryResult({ calibration }: { calibration: CalibrationView }) {
  const failed = failedChecks(calibration);
  return (
    <section
      aria-labelledby="history-title"
      data-testid="history-result"
      className="flex flex-col gap-2 border-2 border-dashed border-graphite-600 bg-graphite-900 p-4"
    >
      <h2 id="history-title" className="text-base font-semibold tracking-widest text-graphite-300 uppercase">
        On file, from the unit&apos;s history
      </h2>
      <p className="flex flex-wrap items-center gap-x-5 gap-y-1 text-xl">
        <VerdictMark verdict={calibration.verdict} />
        <span className="font-mono text-graphite-100" data-testid="history-offset">
          {formatOffsetDeg(calibration.offsetDeg)}
        </span>
        <span className="text-graphite-200" data-testid="history-when">
          measured {formatDateTime(calibration.computedAt)} at {calibration.stationName}
        </span>
        <span className="text-graphite-200" data-testid="history-attempt">
          attempt {calibration.attempt ?? '—'} of {calibration.maxAttempts}
        </span>
      </p>
      {failed.length > 0 ? (
        <ul className="flex flex-col gap-1 text-graphite-200">
          {failed.map((f) => (
            <li key={f.key}>
              <span className="font-semibold text-graphite-100">{f.name}:</span> {f.message}
            </li>
          ))}
        </ul>
      ) : null}
    </section>
  );
}
