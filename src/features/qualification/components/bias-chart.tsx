import { formatSignedDeg } from '#shared/wording';
import type { QualificationRunView } from '#shared/schemas/qualification';

const W = 760;
const H = 300;
const PAD = { l: 64, r: 16, t: 16, b: 40 };

/**
 * Bias of one station: each reading of a reference unit minus its certified value, over time, with the
 * tolerance as limits (± the tightest tolerance among the readings shown). Passes are circles, fails
 * squares; readings taken while certifying are not drawn (they have no certified value yet).
 */
export function BiasChart({ readings, timeZone }: { readings: QualificationRunView[]; timeZone: string }) {
  const judged = readings.filter((r) => r.deviationDeg !== null);
  if (!judged.length) {
    return <p className="text-graphite-300">No judged reference readings at this station yet.</p>;
  }
  const tol = Math.min(...judged.map((r) => r.toleranceDeg));
  const span = Math.max(tol * 1.5, ...judged.map((r) => Math.abs(r.deviationDeg!) * 1.1));
  const t0 = new Date(judged[0].measuredAt).getTime();
  const t1 = Math.max(t0 + 60_000, new Date(judged.at(-1)!.measuredAt).getTime());
  const x = (iso: string) => PAD.l + ((new Date(iso).getTime() - t0) / (t1 - t0)) * (W - PAD.l - PAD.r);
  const y = (v: number) => PAD.t + ((span - v) / (2 * span)) * (H - PAD.t - PAD.b);
  const fmt = (iso: string) =>
    new Intl.DateTimeFormat('en-GB', {
      timeZone,
      day: '2-digit',
      month: 'short',
      hour: '2-digit',
      minute: '2-digit',
    }).format(new Date(iso));
  const mean = judged.reduce((a, r) => a + r.deviationDeg!, 0) / judged.length;
  const fails = judged.filter((r) => r.verdict === 'fail').length;
  return (
    <figure className="flex flex-col gap-2" data-testid="bias-chart">
      <svg
        viewBox={`0 0 ${W} ${H}`}
        className="w-full max-w-4xl"
        role="img"
        aria-label={`Bias chart: ${judged.length} reference readings, mean deviation ${mean.toFixed(3)}°, limits ± ${tol.toFixed(2)}°, ${fails} outside.`}
      >
        <rect
          x={PAD.l}
          y={PAD.t}
          width={W - PAD.l - PAD.r}
          height={H - PAD.t - PAD.b}
          fill="none"
          stroke="#5b6470"
        />
        {[tol, 0, -tol].map((v) => (
          <g key={v}>
            <line
              x1={PAD.l}
              x2={W - PAD.r}
              y1={y(v)}
              y2={y(v)}
              stroke={v === 0 ? '#c9d1d9' : '#f0a35e'}
              strokeDasharray={v === 0 ? undefined : '6 4'}
            />
            <text x={PAD.l - 6} y={y(v) + 4} textAnchor="end" fontSize="13" fill="#e6edf3">
              {v === 0 ? '0°' : formatSignedDeg(v)}
            </text>
          </g>
        ))}
        <polyline
          fill="none"
          stroke="#8fb8de"
          strokeWidth="1.5"
          points={judged.map((r) => `${x(r.measuredAt)},${y(r.deviationDeg!)}`).join(' ')}
        />
        {judged.map((r) =>
          r.verdict === 'fail' ? (
            <rect
              key={r.id}
              x={x(r.measuredAt) - 5}
              y={y(r.deviationDeg!) - 5}
              width="10"
              height="10"
              fill="#ff7b72"
            >
              <title>{`${fmt(r.measuredAt)}: ${r.serial} ${formatSignedDeg(r.deviationDeg!, 3)} (failed)`}</title>
            </rect>
          ) : (
            <circle key={r.id} cx={x(r.measuredAt)} cy={y(r.deviationDeg!)} r="4.5" fill="#7ee787">
              <title>{`${fmt(r.measuredAt)}: ${r.serial} ${formatSignedDeg(r.deviationDeg!, 3)} (passed)`}</title>
            </circle>
          ),
        )}
        <text x={PAD.l} y={H - 12} fontSize="13" fill="#e6edf3">
          {fmt(judged[0].measuredAt)}
        </text>
        <text x={W - PAD.r} y={H - 12} fontSize="13" fill="#e6edf3" textAnchor="end">
          {fmt(judged.at(-1)!.measuredAt)}
        </text>
      </svg>
      <figcaption className="text-graphite-200">
        Reading minus certified value, in degrees, over time. Dashed lines: the tolerance ± {tol.toFixed(2)}°.
        Circles passed, squares failed. Mean bias {formatSignedDeg(mean, 3)} over {judged.length} readings;{' '}
        {fails} failed.
      </figcaption>
    </figure>
  );
}
