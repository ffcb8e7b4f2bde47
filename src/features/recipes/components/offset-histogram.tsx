import type { OffsetHistogram } from '#shared/schemas/recipes';

/**
 * Two offset distributions on one axis: the version under test (filled bars) beside the version in
 * force (outlined bars), 1 °e bins. The shapes differ as well as the colours.
 */
export function OffsetHistogramChart({
  draft,
  inForce,
  draftLabel,
  inForceLabel,
}: {
  draft: OffsetHistogram;
  inForce: OffsetHistogram;
  draftLabel: string;
  inForceLabel: string;
}) {
  const bins = draft.counts.length;
  const max = Math.max(1, ...draft.counts, ...inForce.counts);
  const width = 760;
  const height = 220;
  const left = 44;
  const bottom = 28;
  const plotW = width - left - 8;
  const plotH = height - bottom - 8;
  const binW = plotW / bins;
  const y = (n: number) => 8 + plotH - (n / max) * plotH;
  const tickEvery = Math.max(1, Math.ceil(bins / 12));
  const summary = `Offsets from ${draft.fromDeg} °e to ${draft.fromDeg + bins} °e in 1 °e bins; tallest bin ${max} units.`;
  return (
    <figure className="flex flex-col gap-2">
      <svg viewBox={`0 0 ${width} ${height}`} role="img" aria-label={summary} className="w-full max-w-4xl">
        <line x1={left} y1={8 + plotH} x2={width - 8} y2={8 + plotH} stroke="var(--color-graphite-500)" />
        <text x={left - 6} y={14} textAnchor="end" fontSize="12" fill="var(--color-graphite-300)">
          {max}
        </text>
        <text x={left - 6} y={8 + plotH} textAnchor="end" fontSize="12" fill="var(--color-graphite-300)">
          0
        </text>
        {draft.counts.map((n, i) => (
          <g key={i}>
            <rect
              x={left + i * binW + binW * 0.1}
              y={y(inForce.counts[i] ?? 0)}
              width={binW * 0.38}
              height={8 + plotH - y(inForce.counts[i] ?? 0)}
              fill="none"
              stroke="var(--color-graphite-300)"
            />
            <rect
              x={left + i * binW + binW * 0.52}
              y={y(n)}
              width={binW * 0.38}
              height={8 + plotH - y(n)}
              fill="var(--color-copper-400)"
            />
            {i % tickEvery === 0 ? (
              <text
                x={left + i * binW}
                y={height - 8}
                textAnchor="middle"
                fontSize="12"
                fill="var(--color-graphite-300)"
              >
                {draft.fromDeg + i}°
              </text>
            ) : null}
          </g>
        ))}
      </svg>
      <figcaption className="flex flex-wrap gap-6 text-sm text-graphite-200">
        <span className="flex items-center gap-2">
          <span aria-hidden className="inline-block size-3 bg-copper-400" /> {draftLabel} (filled)
        </span>
        <span className="flex items-center gap-2">
          <span aria-hidden className="inline-block size-3 border border-graphite-300" /> {inForceLabel}{' '}
          (outlined)
        </span>
        <span>Offset in electrical degrees (°e); height: units per 1 °e bin.</span>
      </figcaption>
    </figure>
  );
}
