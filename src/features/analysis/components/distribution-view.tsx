import type { DistributionView as View } from '#shared/schemas/analysis';
import { normalPdf } from '#shared/statistics';
import { Alert } from '#src/components/ui/alert';
import { StatusChip } from '#src/components/ui/status-chip';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { fmt, fmtP, READING_TEXT } from './stat-format';
import { SvgExport } from './chart-export';

const W = 760;
const H = 300;
const PAD = { l: 56, r: 16, t: 16, b: 44 };

/** Histogram with the recipe's limits, the target and the fitted normal curve, as SVG (exportable as is). */
export function Histogram({ view, id }: { view: View; id?: string }) {
  const bins = view.histogram;
  if (!bins.length) return null;
  const { lsl, usl, target } = view.limits;
  const d = view.description;
  const lo = Math.min(bins[0].from, lsl ?? Infinity);
  const hi = Math.max(bins[bins.length - 1].to, usl ?? -Infinity);
  const span = hi - lo || 1;
  const x0 = lo - span * 0.04;
  const x1 = hi + span * 0.04;
  const binWidth = bins[0].to - bins[0].from;
  const curve: [number, number][] = [];
  if (d.mean !== null && d.sd && d.sd > 0) {
    for (let i = 0; i <= 120; i++) {
      const x = x0 + ((x1 - x0) * i) / 120;
      curve.push([x, view.n * binWidth * normalPdf(x, d.mean, d.sd)]);
    }
  }
  const yMax = Math.max(...bins.map((b) => b.count), ...curve.map((c) => c[1])) * 1.1 || 1;
  const sx = (x: number) => PAD.l + ((x - x0) / (x1 - x0)) * (W - PAD.l - PAD.r);
  const sy = (y: number) => H - PAD.b - (y / yMax) * (H - PAD.t - PAD.b);
  const ticks = Array.from({ length: 6 }, (_, i) => x0 + ((x1 - x0) * i) / 5);
  const marker = (x: number | null, label: string, color: string, dash: string) =>
    x === null ? null : (
      <g>
        <line
          x1={sx(x)}
          x2={sx(x)}
          y1={PAD.t}
          y2={H - PAD.b}
          stroke={color}
          strokeWidth={2}
          strokeDasharray={dash}
        />
        <text x={sx(x) + 4} y={PAD.t + 12} fill={color} fontSize={13}>
          {label} {fmt(x, view.unit, 1)}
        </text>
      </g>
    );
  return (
    <svg
      id={id}
      viewBox={`0 0 ${W} ${H}`}
      className="w-full max-w-4xl"
      role="img"
      aria-label={`Histogram of ${view.n} values from ${fmt(d.min, view.unit)} to ${fmt(d.max, view.unit)}, mean ${fmt(d.mean, view.unit)}`}
      xmlns="http://www.w3.org/2000/svg"
      style={{ background: '#161c21', fontFamily: 'Barlow, sans-serif' }}
    >
      {bins.map((b, i) => (
        <rect
          key={i}
          x={sx(b.from) + 0.5}
          y={sy(b.count)}
          width={Math.max(0, sx(b.to) - sx(b.from) - 1)}
          height={H - PAD.b - sy(b.count)}
          fill="#4fa9d6"
          opacity={0.75}
        />
      ))}
      {curve.length ? (
        <polyline
          points={curve.map(([x, y]) => `${sx(x)},${sy(y)}`).join(' ')}
          fill="none"
          stroke="#e3b23c"
          strokeWidth={2}
        />
      ) : null}
      {marker(lsl, 'Lower limit', '#ff9a88', '6 4')}
      {marker(usl, 'Upper limit', '#ff9a88', '6 4')}
      {marker(target, 'Target', '#86d8a8', '2 3')}
      <line x1={PAD.l} x2={W - PAD.r} y1={H - PAD.b} y2={H - PAD.b} stroke="#7f8d98" />
      {ticks.map((t) => (
        <text key={t} x={sx(t)} y={H - PAD.b + 18} fill="#c9d1d7" fontSize={13} textAnchor="middle">
          {fmt(t, '', 1)}
        </text>
      ))}
      <text x={(W + PAD.l) / 2} y={H - 6} fill="#c9d1d7" fontSize={13} textAnchor="middle">
        {view.unit === '°' ? 'electrical degrees' : view.unit}
      </text>
      <text
        x={14}
        y={(H - PAD.b) / 2}
        fill="#c9d1d7"
        fontSize={13}
        transform={`rotate(-90 14 ${(H - PAD.b) / 2})`}
        textAnchor="middle"
      >
        units
      </text>
    </svg>
  );
}

export function DistributionPanel({ view }: { view: View }) {
  const d = view.description;
  const c = view.capability;
  const u = view.unit;
  const rows: [string, string][] = [
    ['Units (n)', String(view.n)],
    ['Mean', fmt(d.mean, u, 3)],
    ['Standard deviation', fmt(d.sd, u, 3)],
    ['Median', fmt(d.median, u, 3)],
    ['Lowest', fmt(d.min, u, 3)],
    ['Highest', fmt(d.max, u, 3)],
    ['Skewness', fmt(d.skewness, '', 3)],
    [
      'Normality (Anderson–Darling)',
      view.normality
        ? `A² ${fmt(view.normality.statistic, '', 3)}, ${fmtP(view.normality.pValue)} (${view.normality.normal ? 'looks normal' : 'not normal'})${view.normality.n < view.n ? `, on the newest ${view.normality.n.toLocaleString('en')} values` : ''}`
        : 'needs 8 values or more',
    ],
  ];
  return (
    <div className="flex flex-col gap-6">
      {view.warnings.map((w) => (
        <Alert key={w} title="Read with care">
          {w}
        </Alert>
      ))}
      <div className="flex flex-col gap-2">
        <SvgExport targetId="analysis-histogram" name="offset-histogram" />
        <Histogram view={view} id="analysis-histogram" />
      </div>
      <div className="grid gap-6 lg:grid-cols-2">
        <TableFrame caption="Figures of the distribution">
          <tbody>
            {rows.map(([k, v]) => (
              <tr key={k}>
                <Th scope="row">{k}</Th>
                <Td className="tabular-nums">{v}</Td>
              </tr>
            ))}
          </tbody>
        </TableFrame>
        {c ? (
          <div className="flex flex-col gap-3">
            <TableFrame caption="Capability with 95 % confidence intervals">
              <thead>
                <tr>
                  <Th>Index</Th>
                  <Th>Value</Th>
                  <Th>95 % interval</Th>
                </tr>
              </thead>
              <tbody>
                {(
                  [
                    ['Cp (within)', c.cp],
                    ['Cpk (within)', c.cpk],
                    ['Pp (overall)', c.pp],
                    ['Ppk (overall)', c.ppk],
                  ] as const
                ).map(([k, i]) => (
                  <tr key={k}>
                    <Th scope="row">{k}</Th>
                    <Td className="tabular-nums">{fmt(i?.value, '', 2)}</Td>
                    <Td className="tabular-nums">
                      {i ? `${fmt(i.lower, '', 2)} to ${fmt(i.upper, '', 2)}` : '—'}
                    </Td>
                  </tr>
                ))}
                <tr>
                  <Th scope="row">σ within (moving range)</Th>
                  <Td className="tabular-nums">{fmt(c.sigmaWithin, u, 3)}</Td>
                  <Td />
                </tr>
                <tr>
                  <Th scope="row">Expected outside limits</Th>
                  <Td className="tabular-nums">{fmt(c.ppmWithin, 'ppm', 1)}</Td>
                  <Td className="tabular-nums">overall σ: {fmt(c.ppmOverall, 'ppm', 1)}</Td>
                </tr>
              </tbody>
            </TableFrame>
            {c.reading ? (
              <div className="flex flex-wrap items-center gap-3">
                <StatusChip
                  tone={c.reading === 'capable' ? 'ok' : c.reading === 'not-capable' ? 'fault' : 'warn'}
                >
                  {c.reading === 'capable'
                    ? 'Capable'
                    : c.reading === 'not-capable'
                      ? 'Not capable'
                      : 'Acceptable, watch it'}
                </StatusChip>
                <p className="text-graphite-200">
                  {READING_TEXT[c.reading]} Bands for initial studies: 1.33 and 1.67 (common practice in the
                  automotive supply chain).
                </p>
              </div>
            ) : null}
          </div>
        ) : null}
      </div>
    </div>
  );
}
