import { useSearchParams } from 'react-router';
import { COMPARE_BY, type ComparisonView as View } from '#shared/schemas/analysis';
import { Alert } from '#src/components/ui/alert';
import { SelectField, TextField } from '#src/components/ui/field';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { fmt, fmtP } from './stat-format';
import { SvgExport } from './chart-export';

export function ComparisonSettings({ unit }: { unit: string }) {
  const [params, setParams] = useSearchParams();
  const set = (key: string, value: string, fallback: string) => {
    // From the address as it is now, not as this render saw it: two changes in one moment (two fields
    // filled one after the other) must both stay.
    const next = new URLSearchParams(window.location.search);
    if (value === fallback || value === '') next.delete(key);
    else next.set(key, value);
    setParams(next);
  };
  return (
    <div className="grid grid-cols-1 gap-4 sm:grid-cols-2 lg:grid-cols-4">
      <SelectField
        label="Compare by"
        value={params.get('by') ?? 'station'}
        onChange={(e) => set('by', e.target.value, 'station')}
        options={Object.entries(COMPARE_BY).map(([value, label]) => ({ value, label }))}
      />
      <TextField
        label={`Practical threshold (${unit})`}
        type="number"
        min={0}
        step={0.1}
        hint="Groups whose mean differs from the rest by more than this are named."
        value={params.get('threshold') ?? '1'}
        onChange={(e) => set('threshold', e.target.value, '1')}
      />
    </div>
  );
}

const W = 760;
const ROW = 34;
const PAD = { l: 150, r: 24, t: 12, b: 40 };

/** Horizontal box plots (Tukey whiskers) with each group's mean and its 95 % interval. */
export function BoxPlots({ view, id }: { view: View; id?: string }) {
  const groups = view.groups;
  if (!groups.length) return null;
  const standOut = new Set(view.standOut.map((s) => s.key));
  const lo = Math.min(...groups.map((g) => Math.min(g.box.whiskerLow, g.ciLow ?? g.mean)));
  const hi = Math.max(...groups.map((g) => Math.max(g.box.whiskerHigh, g.ciHigh ?? g.mean)));
  const span = hi - lo || 1;
  const x0 = lo - span * 0.05;
  const x1 = hi + span * 0.05;
  const H = PAD.t + PAD.b + ROW * groups.length;
  const sx = (x: number) => PAD.l + ((x - x0) / (x1 - x0)) * (W - PAD.l - PAD.r);
  const ticks = Array.from({ length: 6 }, (_, i) => x0 + ((x1 - x0) * i) / 5);
  return (
    <svg
      id={id}
      viewBox={`0 0 ${W} ${H}`}
      className="w-full max-w-4xl"
      role="img"
      aria-label={`Box plots of ${groups.length} groups; the table below gives every figure`}
      xmlns="http://www.w3.org/2000/svg"
      style={{ background: '#161c21', fontFamily: 'Barlow, sans-serif' }}
    >
      {ticks.map((t) => (
        <g key={t}>
          <line x1={sx(t)} x2={sx(t)} y1={PAD.t} y2={H - PAD.b} stroke="#333e47" />
          <text x={sx(t)} y={H - PAD.b + 18} fill="#c9d1d7" fontSize={13} textAnchor="middle">
            {fmt(t, '', 1)}
          </text>
        </g>
      ))}
      <text x={(W + PAD.l) / 2} y={H - 4} fill="#c9d1d7" fontSize={13} textAnchor="middle">
        {view.unit === '°' ? 'electrical degrees' : view.unit}
      </text>
      {groups.map((g, i) => {
        const y = PAD.t + ROW * i + ROW / 2;
        const out = standOut.has(g.key);
        const color = out ? '#ff9a88' : '#4fa9d6';
        return (
          <g key={g.key}>
            <text
              x={PAD.l - 8}
              y={y + 4}
              fill={out ? '#ff9a88' : '#e3e8eb'}
              fontSize={13}
              textAnchor="end"
              fontWeight={out ? 700 : 400}
            >
              {g.label}
            </text>
            <line x1={sx(g.box.whiskerLow)} x2={sx(g.box.whiskerHigh)} y1={y} y2={y} stroke="#a5b1ba" />
            <rect
              x={sx(g.box.q1)}
              y={y - 9}
              width={Math.max(1, sx(g.box.q3) - sx(g.box.q1))}
              height={18}
              fill={color}
              opacity={0.35}
              stroke={color}
            />
            <line
              x1={sx(g.box.median)}
              x2={sx(g.box.median)}
              y1={y - 9}
              y2={y + 9}
              stroke="#f3f5f6"
              strokeWidth={2}
            />
            {g.ciLow !== null && g.ciHigh !== null ? (
              <line
                x1={sx(g.ciLow)}
                x2={sx(g.ciHigh)}
                y1={y + 12}
                y2={y + 12}
                stroke="#e3b23c"
                strokeWidth={3}
              />
            ) : null}
            <circle cx={sx(g.mean)} cy={y + 12} r={3.5} fill="#e3b23c" />
            {g.box.outliers.slice(0, 60).map((o, k) => (
              <circle key={k} cx={sx(o)} cy={y} r={2} fill="none" stroke="#a5b1ba" />
            ))}
          </g>
        );
      })}
    </svg>
  );
}

export function ComparisonPanel({ view }: { view: View }) {
  const u = view.unit;
  const byLabel = COMPARE_BY[view.by].toLowerCase();
  return (
    <div className="flex flex-col gap-6">
      {view.standOut.length ? (
        <Alert
          tone="fault"
          title={`${view.standOut.length === 1 ? 'One' : view.standOut.length} ${byLabel}${view.standOut.length === 1 ? '' : 's'} stand${view.standOut.length === 1 ? 's' : ''} out`}
        >
          {view.standOut
            .map(
              (s) =>
                `${s.label}: mean ${s.differenceFromRest > 0 ? '+' : ''}${fmt(s.differenceFromRest, u, 2)} against the rest`,
            )
            .join('; ')}
          . The practical threshold is {fmt(view.threshold, u, 1)}.
        </Alert>
      ) : (
        <Alert tone="ok" title="No group stands out">
          No {byLabel} differs from the rest by more than {fmt(view.threshold, u, 1)}.
        </Alert>
      )}
      {view.test ? (
        <p className="text-graphite-200">
          {view.test.reason} {view.test.test === 'welch-anova' ? 'F' : 'H'} ={' '}
          {fmt(view.test.statistic, '', 2)}, {fmtP(view.test.pValue)}:{' '}
          {view.test.pValue < 0.05
            ? 'the groups differ by more than chance would explain.'
            : 'the differences could be chance.'}
        </p>
      ) : null}
      <SvgExport targetId="analysis-boxplots" name={`comparison-by-${view.by}`} />
      <BoxPlots view={view} id="analysis-boxplots" />
      <p className="text-sm text-graphite-300">
        Box: middle half of the units, line at the median; whiskers to the furthest unit within 1.5 box
        lengths; circles beyond. Yellow: the mean and its 95 % confidence interval.
      </p>
      <TableFrame caption={`Groups by ${byLabel}`}>
        <thead>
          <tr>
            <Th>{COMPARE_BY[view.by]}</Th>
            <Th>Units</Th>
            <Th>Mean</Th>
            <Th>95 % interval of the mean</Th>
            <Th>Standard deviation</Th>
            <Th>Median</Th>
          </tr>
        </thead>
        <tbody>
          {view.groups.map((g) => (
            <tr key={g.key}>
              <Th scope="row">{g.label}</Th>
              <Td className="tabular-nums">{g.n}</Td>
              <Td className="tabular-nums">{fmt(g.mean, u, 3)}</Td>
              <Td className="tabular-nums">
                {g.ciLow !== null ? `${fmt(g.ciLow, u, 3)} to ${fmt(g.ciHigh, u, 3)}` : '—'}
              </Td>
              <Td className="tabular-nums">{fmt(g.sd, u, 3)}</Td>
              <Td className="tabular-nums">{fmt(g.box.median, u, 3)}</Td>
            </tr>
          ))}
        </tbody>
      </TableFrame>
    </div>
  );
}
