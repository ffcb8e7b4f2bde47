import { formatCheckLimit, formatCheckValue } from '#shared/calibration/check-guide';
import type { CalibrationView } from '#shared/schemas/calibrations';
import type { ModelView } from '#shared/schemas/models';
import { StatusChip } from '../ui/status-chip';
import { formatDateTime } from '#src/lib/format';
import { HallPolar } from './hall-polar';
import { PROGRAMMING_LABELS, PROGRAMMING_TONES, failedChecks, formatCounts } from './calibration-format';
import { formatOffsetDeg } from '#shared/wording';
import { VerdictBanner, VerdictMark } from './verdict-banner';

type CalibrationResultProps = {
  calibration: CalibrationView;
  /** The unit's model, for the recipe's nominal hall positions and limits. */
  model: ModelView | null;
  /** A result that just arrived, or one read from the unit's history. */
  fresh: boolean;
  /** The unit is on hold: the hold state above says so, and nothing here may suggest programming. */
  held?: boolean;
};

/** The result of one calibration: verdict, offset, hall edges, what failed and what to do next. */
export function CalibrationResult({ calibration, model, fresh, held = false }: CalibrationResultProps) {
  const failed = failedChecks(calibration);
  const checksByCode = new Map((calibration.result?.checks ?? []).map((c) => [c.code, c]));
  const programmable = calibration.verdict === 'pass' && !held;
  const recipe = model?.activeRecipe ?? null;
  const recipeMatches = recipe?.id === calibration.recipe.id;
  const edges = calibration.result?.edges ?? [];
  const prog = calibration.programming;
  return (
    <section
      aria-labelledby="result-title"
      data-testid="calibration-result"
      className="flex flex-col gap-4"
      aria-live={fresh ? 'polite' : undefined}
    >
      <h2 id="result-title" className="sr-only">
        {fresh ? 'Result' : 'Last result on file'}
      </h2>
      <div className="grid items-stretch gap-4 xl:grid-cols-[minmax(0,1.15fr)_minmax(0,1fr)]">
        <div className="flex flex-col gap-2">
          {held ? (
            <p className="flex items-center gap-3 text-2xl text-graphite-100" data-testid="held-verdict">
              Measured: <VerdictMark verdict={calibration.verdict} />
            </p>
          ) : (
            <VerdictBanner verdict={calibration.verdict} />
          )}
          {!fresh ? (
            <p className="text-sm text-graphite-400">
              From the unit&apos;s history: measured {formatDateTime(calibration.computedAt)} at{' '}
              {calibration.stationName}.
            </p>
          ) : null}
        </div>
        <dl
          className="chamfer chamfer-lg grid grid-cols-2 content-center gap-x-4 gap-y-1 p-5"
          data-testid="offset"
        >
          <dt className="col-span-2 text-sm font-semibold tracking-widest text-graphite-400 uppercase">
            {programmable ? 'Offset to program' : 'Measured offset (do not program)'}
          </dt>
          <dd
            className="col-span-2 font-mono text-5xl font-bold text-graphite-50 2xl:text-7xl"
            data-testid="offset-deg"
          >
            {formatOffsetDeg(calibration.offsetDeg)}
          </dd>
          <dd className="col-span-2 font-mono text-2xl text-copper-200" data-testid="offset-counts">
            {formatCounts(calibration.offsetCounts)}
          </dd>
          <dt className="mt-2 text-graphite-300">Attempt</dt>
          <dd className="mt-2 text-graphite-100">
            {calibration.attempt ?? '—'} of {calibration.maxAttempts}
          </dd>
          <dt className="text-graphite-300">Recipe</dt>
          <dd className="text-graphite-100" data-testid="result-recipe">
            v{calibration.recipe.version}
            {calibration.recipe.name ? ` · ${calibration.recipe.name}` : ''}
          </dd>
        </dl>
      </div>
      <div
        className={`flex items-start gap-3 border-l-4 p-4 text-2xl ${
          programmable ? 'border-ok bg-graphite-850' : 'border-copper-400 bg-graphite-850'
        }`}
        data-testid="next-action"
      >
        <svg width="28" height="28" viewBox="0 0 20 20" aria-hidden className="mt-1 shrink-0 text-copper-300">
          <path d="M3 10h12M10 4l6 6-6 6" fill="none" stroke="currentColor" strokeWidth="3" />
        </svg>
        <p>
          <span className="font-semibold text-graphite-50">Next: </span>
          {calibration.nextAction}
        </p>
      </div>
      <div className="grid gap-4 lg:grid-cols-[auto_minmax(0,1fr)]">
        {edges.length > 0 && recipe ? (
          <div className="flex flex-col items-center gap-1">
            <HallPolar
              edges={edges}
              hallRiseDeg={recipe.body.hallRiseDeg}
              limitDeg={recipe.body.limits.edgeResidualDeg}
            />
            {!recipeMatches ? (
              <p className="max-w-[300px] text-center text-sm text-warn">
                Nominal positions from recipe v{recipe.version}; this result used v
                {calibration.recipe.version}.
              </p>
            ) : null}
          </div>
        ) : null}
        <div className="flex flex-col gap-3">
          <h3 className="text-sm font-semibold tracking-widest text-graphite-300 uppercase">
            {failed.length > 0 ? 'What failed' : 'Checks'}
          </h3>
          {failed.length > 0 ? (
            <ul className="flex flex-col gap-2" data-testid="failed-checks">
              {failed.map((f) => {
                const check = checksByCode.get(f.key as never);
                return (
                  <li key={f.key} className="flex gap-2.5 text-lg text-graphite-50" data-check={f.key}>
                    <span aria-hidden className="mt-2 inline-block size-3 shrink-0 bg-fault" />
                    <span className="flex flex-col">
                      <span className="text-xl font-semibold">{f.name}</span>
                      <span>{f.message}</span>
                      {check ? (
                        <span className="text-base text-graphite-300" data-testid="check-limit">
                          Measured {formatCheckValue(check)} · limit {formatCheckLimit(check)}
                        </span>
                      ) : null}
                    </span>
                  </li>
                );
              })}
            </ul>
          ) : (
            <p className="flex items-center gap-2.5 text-lg text-graphite-100">
              <span aria-hidden className="inline-block size-3 rounded-full bg-ok" />
              All {calibration.result?.checks.length ?? 0} checks passed.
            </p>
          )}
          {calibration.result ? (
            <p className="text-graphite-200">
              {Math.round(calibration.result.speedRpm)} rpm · {calibration.result.electricalTurns.toFixed(0)}{' '}
              electrical turns
            </p>
          ) : null}
          {calibration.verdict !== 'unusable' && !programmable && prog.status === 'pending' ? (
            <p className="flex items-center gap-2.5 text-lg text-graphite-100" data-testid="no-programming">
              <span aria-hidden className="inline-block size-3 rotate-45 bg-fault" />
              Do not program this unit: it {held ? 'is on hold' : 'failed'}.
            </p>
          ) : null}
          {calibration.verdict !== 'unusable' && (programmable || prog.status !== 'pending') ? (
            <div className="flex flex-col items-start gap-1" data-testid="programming">
              <h3 className="text-sm font-semibold tracking-widest text-graphite-400 uppercase">
                Programming
              </h3>
              <StatusChip tone={PROGRAMMING_TONES[prog.status]}>{PROGRAMMING_LABELS[prog.status]}</StatusChip>
              {prog.status !== 'pending' ? (
                <span className="text-sm text-graphite-300">
                  Expected {prog.expectedCounts ?? '—'}, written {prog.writtenCounts ?? '—'}, read back{' '}
                  {prog.readBackCounts ?? '—'} · {formatDateTime(prog.confirmedAt)}
                </span>
              ) : null}
            </div>
          ) : null}
        </div>
      </div>
    </section>
  );
}
