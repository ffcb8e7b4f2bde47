import type { Verdict } from '#src/components/calibrations/calibration-format';
import { VERDICT_LABELS } from '#src/components/calibrations/calibration-format';
import type { ProgressPhase } from './station-progress';

export type { ProgressPhase };

// Labels are read from two metres: short words, at least 24 px.
const STEPS: { phase: ProgressPhase; label: string; doing: string }[] = [
  { phase: 'waiting', label: 'Spin', doing: 'Waiting for the station' },
  { phase: 'received', label: 'Received', doing: 'The station sent its capture' },
  { phase: 'computing', label: 'Computing', doing: 'Working out the offset' },
  { phase: 'result', label: 'Result', doing: 'Committed' },
];

function StepMark({ state }: { state: 'done' | 'now' | 'later' }) {
  if (state === 'done')
    return (
      <svg width="26" height="26" viewBox="0 0 26 26" aria-hidden className="shrink-0 text-copper-300">
        <circle cx="13" cy="13" r="12" fill="currentColor" />
        <path d="M7 13.5l4 4 8-9" fill="none" stroke="var(--color-graphite-950)" strokeWidth="3" />
      </svg>
    );
  if (state === 'now')
    return (
      <svg
        width="26"
        height="26"
        viewBox="0 0 26 26"
        aria-hidden
        className="shrink-0 animate-pulse text-copper-200"
      >
        <path d="M13 1 25 13 13 25 1 13Z" fill="currentColor" />
      </svg>
    );
  return (
    <svg width="26" height="26" viewBox="0 0 26 26" aria-hidden className="shrink-0 text-graphite-400">
      <circle cx="13" cy="13" r="10.5" fill="none" stroke="currentColor" strokeWidth="3" />
    </svg>
  );
}

/** Where this unit's measurement is, pushed by the station's events: four steps in words and shapes. */
export function LiveProgress({ phase, verdict }: { phase: ProgressPhase; verdict?: Verdict }) {
  const current = STEPS.findIndex((s) => s.phase === phase);
  return (
    <ol
      aria-label="Progress of this unit"
      data-testid="live-progress"
      data-phase={phase}
      className="grid grid-cols-4 gap-2"
    >
      {STEPS.map((step, i) => {
        const state =
          i < current || (phase === 'result' && i === current) ? 'done' : i === current ? 'now' : 'later';
        return (
          <li
            key={step.phase}
            aria-current={i === current ? 'step' : undefined}
            className={`flex min-h-20 items-center gap-3 border-t-4 px-3 py-2 ${
              state === 'done'
                ? 'border-copper-400 bg-graphite-850'
                : state === 'now'
                  ? 'border-copper-200 bg-graphite-800'
                  : 'border-graphite-700 bg-graphite-900'
            }`}
          >
            <StepMark state={state} />
            <span className="flex min-w-0 flex-col leading-tight">
              <span
                className={`text-2xl font-semibold ${state === 'later' ? 'text-graphite-300' : 'text-graphite-50'}`}
              >
                {step.phase === 'result' && phase === 'result' && verdict
                  ? `Result: ${VERDICT_LABELS[verdict]}`
                  : step.label}
              </span>
              <span className="text-base text-graphite-300">
                {state === 'done' ? 'Done' : state === 'now' ? step.doing : 'Not yet'}
              </span>
            </span>
          </li>
        );
      })}
    </ol>
  );
}
