import type { GaugeStudyDetail } from '#shared/schemas/qualification';

const W = 640;
const H = 260;
const PAD = { l: 60, r: 12, t: 12, b: 44 };
/** Appraiser marks differ in shape as well as colour: circle, square, triangle, diamond. */
const COLORS = ['#7cc4ff', '#f0a35e', '#b9e07a', '#e6a0f0'];

function Mark({ i, x, y }: { i: number; x: number; y: number }) {
  const c = COLORS[i % COLORS.length];
  switch (i % 4) {
    case 0:
      return <circle cx={x} cy={y} r={4} fill={c} />;
    case 1:
      return <rect x={x - 4} y={y - 4} width={8} height={8} fill={c} />;
    case 2:
      return <path d={`M${x} ${y - 5} L${x + 5} ${y + 4} L${x - 5} ${y + 4}Z`} fill={c} />;
    default:
      return <path d={`M${x} ${y - 5} L${x + 5} ${y} L${x} ${y + 5} L${x - 5} ${y}Z`} fill={c} />;
  }
}

function Frame({
  title,
  summary,
  yMin,
  yMax,
  xLabels,
  yUnit,
  children,
}: {
  title: string;
  summary: string;
  yMin: number;
  yMax: number;
  xLabels: string[];
  yUnit: string;
  children: (x: (i: number) => number, y: (v: number) => number) => React.ReactNode;
}) {
  const span = yMax - yMin || 1;
  const y = (v: number) => PAD.t + ((yMax - v) / span) * (H - PAD.t - PAD.b);
  const x = (i: number) => PAD.l + ((i + 0.5) / xLabels.length) * (W - PAD.l - PAD.r);
  const ticks = [yMin, (yMin + yMax) / 2, yMax];
  return (
    <figure className="flex flex-col gap-1">
      <figcaption className="font-semibold text-graphite-100">{title}</figcaption>
      <svg viewBox={`0 0 ${W} ${H}`} className="w-full" role="img" aria-label={`${title}: ${summary}`}>
        <rect
          x={PAD.l}
          y={PAD.t}
          width={W - PAD.l - PAD.r}
          height={H - PAD.t - PAD.b}
          fill="none"
          stroke="#5b6470"
        />
        {ticks.map((v) => (
          <text key={v} x={PAD.l - 6} y={y(v) + 4} textAnchor="end" fontSize="12" fill="#e6edf3">
            {v.toFixed(2)}
            {yUnit}
          </text>
        ))}
        {xLabels.map((l, i) => (
          <text key={l} x={x(i)} y={H - PAD.b + 16} textAnchor="middle" fontSize="12" fill="#e6edf3">
            {l}
          </text>
        ))}
        {children(x, y)}
      </svg>
    </figure>
  );
}

function Legend({ names }: { names: string[] }) {
  return (
    <ul className="flex flex-wrap gap-4 text-graphite-200" aria-label="Appraisers">
      {names.map((n, i) => (
        <li key={n} className="flex items-center gap-2">
          <svg width="14" height="14" viewBox="-7 -7 14 14" aria-hidden>
            <Mark i={i} x={0} y={0} />
          </svg>
          {n}
        </li>
      ))}
    </ul>
  );
}

/** The usual gauge-study charts: readings by part, by appraiser, the appraiser × part interaction and the range chart. */
export function StudyCharts({ study }: { study: GaugeStudyDetail }) {
  const data = study.results!.data;
  const P = data.length;
  const O = data[0].length;
  const all = data.flat(2);
  const lo = Math.min(...all);
  const hi = Math.max(...all);
  const pad = (hi - lo) * 0.08 || 0.1;
  const names = study.appraisers.map((a) => a.name);
  const partLabels = study.parts.map((_, i) => String(i + 1));
  const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length;
  const ranges = data.map((part) => part.map((cell) => Math.max(...cell) - Math.min(...cell)));
  const rbar = mean(ranges.flat());
  // D4 for subgroups of the trial count (ASTM E2587): 3.267 for 2, 2.574 for 3 trials.
  const d4: Record<number, number> = { 2: 3.267, 3: 2.574, 4: 2.282, 5: 2.114 };
  const ucl = rbar * (d4[study.trials] ?? 2);
  const rMax = Math.max(ucl, ...ranges.flat()) * 1.1 || 0.01;
  return (
    <div className="flex flex-col gap-4" data-testid="study-charts">
      <Legend names={names} />
      <div className="grid gap-6 xl:grid-cols-2">
        <Frame
          title="Readings by part"
          summary={`${P} parts, every reading of every appraiser; parts numbered as in the design.`}
          yMin={lo - pad}
          yMax={hi + pad}
          xLabels={partLabels}
          yUnit="°"
        >
          {(x, y) =>
            data.map((part, p) =>
              part.map((cell, a) =>
                cell.map((v, t) => (
                  <Mark key={`${p}-${a}-${t}`} i={a} x={x(p) + (a - (O - 1) / 2) * 7} y={y(v)} />
                )),
              ),
            )
          }
        </Frame>
        <Frame
          title="Readings by appraiser"
          summary={`Every reading of each appraiser; the bar is the appraiser's mean.`}
          yMin={lo - pad}
          yMax={hi + pad}
          xLabels={names}
          yUnit="°"
        >
          {(x, y) =>
            Array.from({ length: O }, (_, a) => {
              const vals = data.flatMap((part) => part[a]);
              return (
                <g key={a}>
                  {vals.map((v, k) => (
                    <Mark key={k} i={a} x={x(a) + ((k % 9) - 4) * 4} y={y(v)} />
                  ))}
                  <line
                    x1={x(a) - 30}
                    x2={x(a) + 30}
                    y1={y(mean(vals))}
                    y2={y(mean(vals))}
                    stroke="#e6edf3"
                    strokeWidth={2}
                  />
                </g>
              );
            })
          }
        </Frame>
        <Frame
          title="Appraiser × part interaction"
          summary="Each appraiser's mean per part, joined: parallel lines mean no interaction."
          yMin={lo - pad}
          yMax={hi + pad}
          xLabels={partLabels}
          yUnit="°"
        >
          {(x, y) =>
            Array.from({ length: O }, (_, a) => (
              <g key={a}>
                <polyline
                  fill="none"
                  stroke={COLORS[a % COLORS.length]}
                  strokeWidth={1.5}
                  points={data.map((part, p) => `${x(p)},${y(mean(part[a]))}`).join(' ')}
                />
                {data.map((part, p) => (
                  <Mark key={p} i={a} x={x(p)} y={y(mean(part[a]))} />
                ))}
              </g>
            ))
          }
        </Frame>
        <Frame
          title="Range chart"
          summary={`Range of the trials of each part and appraiser; mean range ${rbar.toFixed(3)}°, upper limit ${ucl.toFixed(3)}° (D4 × mean range).`}
          yMin={0}
          yMax={rMax}
          xLabels={partLabels}
          yUnit="°"
        >
          {(x, y) => (
            <g>
              <line x1={PAD.l} x2={W - PAD.r} y1={y(rbar)} y2={y(rbar)} stroke="#c9d1d9" />
              <line
                x1={PAD.l}
                x2={W - PAD.r}
                y1={y(ucl)}
                y2={y(ucl)}
                stroke="#f0a35e"
                strokeDasharray="6 4"
              />
              {ranges.map((row, p) =>
                row.map((r, a) => <Mark key={`${p}-${a}`} i={a} x={x(p) + (a - (O - 1) / 2) * 7} y={y(r)} />),
              )}
            </g>
          )}
        </Frame>
      </div>
      <p className="text-graphite-300">
        Range chart: solid line the mean range {rbar.toFixed(3)}°, dashed line the upper limit{' '}
        {ucl.toFixed(3)}°. A range above it is a trial to look at (a spoiled trial may be measured again with
        a reason).
      </p>
    </div>
  );
}
