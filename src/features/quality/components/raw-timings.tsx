import { useEffect, useRef, useState } from 'react';
import uPlot from 'uplot';
import 'uplot/dist/uPlot.min.css';
import type { MeasurementTrace } from '#shared/schemas/quality';
import { canonicalMeasurementText } from '#shared/capture/as-posted';
import { Alert, Loading } from '#src/components/ui/alert';
import { Button, buttonClass } from '#src/components/ui/button';
import { SelectField } from '#src/components/ui/field';
import { Panel } from '#src/components/ui/panel';
import { formatDateTime } from '#src/lib/format';
import { useMeasurementTrace, useUnitMeasurements } from '../api/quality';

const AXIS = '#a5b1ba';
const GRID = '#333e47';
const COLORS = ['#e8a25c', '#f2cf5b', '#4fa9d6', '#86d8a8', '#c792ea', '#ff9a88', '#d0d6db'];
const EDGE_TYPES = [
  ['A', 'rise'],
  ['A', 'fall'],
  ['B', 'rise'],
  ['B', 'fall'],
  ['C', 'rise'],
  ['C', 'fall'],
] as const;

type Series = { label: string; xs: number[]; ys: number[] };

/** Points-only series on one time axis (ms), drawn with uPlot; the x values are merged and aligned. */
function EventPlot({
  id,
  title,
  yLabel,
  series,
  line,
}: {
  id: string;
  title: string;
  yLabel: string;
  series: Series[];
  line?: { label: string; y: number };
}) {
  const host = useRef<HTMLDivElement>(null);
  useEffect(() => {
    const el = host.current;
    if (!el) return;
    const xs = [...new Set(series.flatMap((s) => s.xs))].sort((a, b) => a - b);
    const at = new Map(xs.map((x, i) => [x, i]));
    const cols = series.map((s) => {
      const col: (number | null)[] = new Array(xs.length).fill(null);
      s.xs.forEach((x, i) => (col[at.get(x)!] = s.ys[i]));
      return col;
    });
    const data = [xs, ...cols, ...(line ? [xs.map(() => line.y)] : [])] as uPlot.AlignedData;
    const plot = new uPlot(
      {
        width: el.clientWidth || 800,
        height: 260,
        legend: { show: true },
        cursor: { drag: { x: true, y: false } },
        scales: { x: { time: false } },
        axes: [
          {
            stroke: AXIS,
            grid: { stroke: GRID },
            ticks: { stroke: GRID },
            label: 'Time from capture start (ms)',
          },
          { stroke: AXIS, grid: { stroke: GRID }, ticks: { stroke: GRID }, label: yLabel, size: 60 },
        ],
        series: [
          { label: 'ms', value: (_u, v) => (v == null ? '' : `${v.toFixed(3)} ms`) },
          ...series.map((s, i) => ({
            label: s.label,
            stroke: COLORS[i % COLORS.length],
            paths: () => null,
            points: { show: true, size: 5, fill: COLORS[i % COLORS.length] },
          })),
          ...(line
            ? [{ label: line.label, stroke: '#e0604c', width: 1, dash: [6, 4], points: { show: false } }]
            : []),
        ],
      },
      data,
      el,
    );
    const resize = new ResizeObserver(() => plot.setSize({ width: el.clientWidth, height: 260 }));
    resize.observe(el);
    return () => {
      resize.disconnect();
      plot.destroy();
    };
  }, [series, line, yLabel]);
  const n = series.reduce((a, s) => a + s.xs.length, 0);
  return (
    <figure className="flex flex-col gap-2">
      <figcaption className="text-lg font-semibold text-graphite-100">{title}</figcaption>
      <div
        id={id}
        ref={host}
        role="img"
        aria-label={`${title}: ${n} points. The table below gives the figures.`}
        className="analysis-plot w-full"
      />
    </figure>
  );
}

async function sha256Hex(text: string): Promise<string> {
  const digest = await crypto.subtle.digest('SHA-256', new TextEncoder().encode(text));
  return [...new Uint8Array(digest)].map((b) => b.toString(16).padStart(2, '0')).join('');
}

/** Downloads the measurement as posted and checks it against the hash stored when it was accepted. */
function AsPosted({ trace }: { trace: MeasurementTrace }) {
  const [check, setCheck] = useState<{ ok: boolean; text: string } | null>(null);
  const [busy, setBusy] = useState(false);
  const url = `/api/quality/measurements/${encodeURIComponent(trace.measurementId)}/as-posted`;
  const verify = async () => {
    setBusy(true);
    try {
      const res = await fetch(url, { credentials: 'same-origin' });
      const text = await res.text();
      const canonical = canonicalMeasurementText(
        text,
        trace.source,
        trace.source === 'capture' && trace.recipe
          ? {
              recipe: trace.recipe.body,
              measurementId: trace.measurementId,
              serial: trace.serial,
              direction: trace.segments[0]?.direction ?? 'forward',
            }
          : undefined,
      );
      const got = await sha256Hex(canonical);
      setCheck(
        got === trace.payloadSha256
          ? {
              ok: true,
              text: `Verified: the file as posted (${text.length.toLocaleString()} characters) gives the stored SHA-256.`,
            }
          : {
              ok: false,
              text: `Does not match: the file gives ${got}, the record says ${trace.payloadSha256}.`,
            },
      );
    } catch (e) {
      setCheck({ ok: false, text: `Could not check the file: ${(e as Error).message}` });
    } finally {
      setBusy(false);
    }
  };
  return (
    <div className="flex flex-col gap-3">
      <p className="font-mono text-sm break-all text-graphite-300">stored SHA-256 {trace.payloadSha256}</p>
      <div className="flex flex-wrap gap-3">
        <a className={buttonClass('secondary')} href={url} download>
          Download as posted ({trace.source === 'capture' ? 'capture CSV' : 'JSON'})
        </a>
        <Button onClick={() => void verify()} busy={busy}>
          Verify against the stored SHA-256
        </Button>
      </div>
      {check ? (
        <p data-testid="sha-check" className={check.ok ? 'text-ok-bright' : 'text-fault'}>
          {check.ok ? '✓ ' : '✗ '}
          {check.text}
        </p>
      ) : null}
    </div>
  );
}

/**
 * The raw data behind a unit's numbers: for a chosen station measurement, its hall edges and back-EMF
 * crossings on the time axis, each hall edge's offset against the fitted angle, the per-edge residuals
 * of the result, and the file as posted with its SHA-256 check. For quality staff and engineers.
 */
export function RawTimings({ serial }: { serial: string }) {
  const list = useUnitMeasurements(serial);
  const [chosen, setChosen] = useState<string | null>(null);
  const measurementId = chosen ?? list.data?.[0]?.measurementId ?? null;
  const trace = useMeasurementTrace(measurementId);
  const cal = list.data?.find((c) => c.measurementId === measurementId);
  if (list.isPending) return <Loading label="Reading the measurements…" />;
  if (list.isError || !list.data?.length) return null;
  const seg = trace.data?.segments[0];
  const lanes: Series[] = seg
    ? [
        ...(['A', 'B', 'C'] as const).map((s, i) => {
          const own = seg.edges.filter((e) => e.sensor === s);
          return { label: `Hall ${s} edge`, xs: own.map((e) => e.us / 1000), ys: own.map(() => 3 - i) };
        }),
        {
          label: 'Back-EMF crossing',
          xs: seg.crossings.map((c) => c.us / 1000),
          ys: seg.crossings.map(() => 0),
        },
      ]
    : [];
  const offsets: Series[] = seg
    ? EDGE_TYPES.map(([s, e]) => {
        const own = seg.edges.filter((x) => x.sensor === s && x.edge === e && x.offsetDeg !== null);
        return { label: `${s} ${e}`, xs: own.map((x) => x.us / 1000), ys: own.map((x) => x.offsetDeg!) };
      })
    : [];
  return (
    <Panel title="Raw timings" titleId="raw-timings-title">
      <div className="flex flex-col gap-5" data-testid="raw-timings">
        <div className="max-w-xl">
          <SelectField
            label="Measurement"
            value={measurementId ?? ''}
            onChange={(e) => setChosen(e.target.value)}
            options={list.data.map((c) => ({
              value: c.measurementId,
              label: `${formatDateTime(c.computedAt)} · ${c.stationName} · attempt ${c.attempt ?? '—'} · ${c.verdict}`,
            }))}
          />
        </div>
        {trace.isPending ? <Loading label="Reading the raw timings…" /> : null}
        {trace.isError ? (
          <Alert tone="fault" title="The raw timings could not be read">
            {trace.error.message}
          </Alert>
        ) : null}
        {trace.data?.problem ? <Alert tone="info">{trace.data.problem}</Alert> : null}
        {seg ? (
          <>
            <EventPlot
              id="raw-lanes"
              title={`Hall edges and back-EMF crossings (${seg.direction}, lanes: A = 3, B = 2, C = 1, crossings = 0)`}
              yLabel="Lane"
              series={lanes}
            />
            <EventPlot
              id="raw-offsets"
              title={`Each hall edge's offset from nominal against the fitted angle (°e); fit residual ${seg.fitResidualRmsDeg.toFixed(3)} °e RMS`}
              yLabel="Offset (°e)"
              series={offsets}
              line={
                cal?.result?.offsetDeg != null ? { label: 'Unit offset', y: cal.result.offsetDeg } : undefined
              }
            />
            {cal?.result ? (
              <table className="w-full max-w-xl border-collapse text-left" data-testid="edge-residuals">
                <caption className="mb-2 text-left font-semibold">
                  Residual per edge type (edge-type mean minus offset)
                </caption>
                <thead>
                  <tr>
                    <th className="border-b border-graphite-700 p-2">Edge</th>
                    <th className="border-b border-graphite-700 p-2">Residual</th>
                    <th className="border-b border-graphite-700 p-2">Edges seen</th>
                  </tr>
                </thead>
                <tbody>
                  {cal.result.edges.map((e) => (
                    <tr key={`${e.sensor}${e.edge}`}>
                      <td className="border-b border-graphite-800 p-2">
                        {e.sensor} {e.edge}
                      </td>
                      <td className="border-b border-graphite-800 p-2 tabular-nums">
                        {e.residualDeg === null ? '—' : `${e.residualDeg.toFixed(3)} °e`}
                      </td>
                      <td className="border-b border-graphite-800 p-2 tabular-nums">
                        {seg.edges.filter((x) => x.sensor === e.sensor && x.edge === e.edge).length}
                      </td>
                    </tr>
                  ))}
                </tbody>
              </table>
            ) : null}
          </>
        ) : null}
        {trace.data ? <AsPosted trace={trace.data} /> : null}
      </div>
    </Panel>
  );
}
