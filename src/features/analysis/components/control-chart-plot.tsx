import { useEffect, useRef } from 'react';
import { useNavigate } from 'react-router';
import uPlot from 'uplot';
import 'uplot/dist/uPlot.min.css';
import { CanvasChartExport } from './chart-export';

export type PlotPoint = { serial: string; computedAt: string; value: number; rules: number[] };

type Props = {
  /** Element id of the chart (exports find the canvas by it). */
  id: string;
  title: string;
  unit: string;
  points: PlotPoint[];
  center: number[];
  ucl: number[];
  lcl: number[];
  height?: number;
};

const AXIS = '#a5b1ba';
const GRID = '#333e47';
const VALUE = '#4fa9d6';
const LIMIT = '#e0604c';
const CENTER = '#86d8a8';
const SIGNAL = '#ff9a88';

/**
 * A control chart drawn on a canvas with uPlot (10,000 points stay smooth). Points that break a rule get a
 * marker and the rule's number; clicking a point opens its unit.
 */
export function ControlChartPlot({ id, title, unit, points, center, ucl, lcl, height = 300 }: Props) {
  const host = useRef<HTMLDivElement>(null);
  const navigate = useNavigate();

  useEffect(() => {
    const el = host.current;
    if (!el) return;
    const x = points.map((_, i) => i + 1);
    const data: uPlot.AlignedData = [x, points.map((p) => p.value), center, ucl, lcl];
    const drawSignals = (u: uPlot) => {
      const ctx = u.ctx;
      ctx.save();
      ctx.fillStyle = SIGNAL;
      ctx.strokeStyle = '#0f1418';
      ctx.font = `${Math.round(12 * devicePixelRatio)}px Barlow, sans-serif`;
      ctx.textAlign = 'center';
      const [i0, i1] = [u.series[0].idxs?.[0] ?? 0, u.series[0].idxs?.[1] ?? points.length - 1];
      let drawn = 0;
      for (let i = i0; i <= i1 && drawn < 2000; i++) {
        const p = points[i];
        if (!p.rules.length) continue;
        drawn += 1;
        const cx = u.valToPos(i + 1, 'x', true);
        const cy = u.valToPos(p.value, 'y', true);
        const r = 5 * devicePixelRatio;
        ctx.beginPath();
        ctx.moveTo(cx, cy - r);
        ctx.lineTo(cx + r, cy);
        ctx.lineTo(cx, cy + r);
        ctx.lineTo(cx - r, cy);
        ctx.closePath();
        ctx.fill();
        ctx.stroke();
        ctx.fillText(p.rules.join(','), cx, cy - r - 3 * devicePixelRatio);
      }
      ctx.restore();
    };
    const opts: uPlot.Options = {
      width: el.clientWidth || 800,
      height,
      title: undefined,
      legend: { show: true, live: true },
      cursor: { points: { size: 8 }, drag: { x: true, y: false } },
      scales: { x: { time: false } },
      axes: [
        { stroke: AXIS, grid: { stroke: GRID }, ticks: { stroke: GRID }, label: 'Point, oldest first' },
        { stroke: AXIS, grid: { stroke: GRID }, ticks: { stroke: GRID }, label: unit, size: 60 },
      ],
      series: [
        { label: 'Point', value: (_u, v) => (v == null ? '' : (points[v - 1]?.serial ?? '')) },
        {
          label: title,
          stroke: VALUE,
          width: 1,
          points: { show: (_u, _s, i0, i1) => i1 - i0 < 600, size: 4, fill: VALUE },
          value: (_u, v) => (v == null ? '' : `${v.toFixed(3)} ${unit}`),
        },
        { label: 'Centre', stroke: CENTER, width: 1, points: { show: false } },
        { label: 'Upper limit', stroke: LIMIT, width: 1, dash: [6, 4], points: { show: false } },
        { label: 'Lower limit', stroke: LIMIT, width: 1, dash: [6, 4], points: { show: false } },
      ],
      hooks: { draw: [drawSignals] },
    };
    const plot = new uPlot(opts, data, el);
    const over = plot.over;
    const onClick = () => {
      const idx = plot.cursor.idx;
      if (idx != null && points[idx]) void navigate(`/units/${encodeURIComponent(points[idx].serial)}`);
    };
    over.addEventListener('click', onClick);
    over.style.cursor = 'pointer';
    const resize = new ResizeObserver(() => plot.setSize({ width: el.clientWidth, height }));
    resize.observe(el);
    return () => {
      resize.disconnect();
      over.removeEventListener('click', onClick);
      plot.destroy();
    };
  }, [points, center, ucl, lcl, unit, title, height, navigate]);

  const signals = points.filter((p) => p.rules.length).length;
  return (
    <figure className="flex flex-col gap-2">
      <div className="flex flex-wrap items-center justify-between gap-2">
        <figcaption className="text-lg font-semibold text-graphite-100">{title}</figcaption>
        <CanvasChartExport
          hostId={id}
          name={id}
          series={{
            title,
            unit,
            values: points.map((p) => p.value),
            center,
            ucl,
            lcl,
            flagged: points.map((p) => p.rules.length > 0),
          }}
        />
      </div>
      <div
        id={id}
        ref={host}
        role="img"
        aria-label={`${title}: ${points.length} points, ${signals} breaking a rule. The list below names them.`}
        className="analysis-plot w-full"
      />
    </figure>
  );
}
