import { useCallback, useEffect, useMemo, useRef } from 'react';
import { useNavigate } from 'react-router';
import uPlot from 'uplot';
import 'uplot/dist/uPlot.min.css';
import { CanvasChartExport } from './chart-export';
import { sparseLine } from './plot-lines';

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

  const drawChart = useCallback(
    (el: HTMLDivElement) => {
      const x = points.map((_, i) => i + 1);
      const values = points.map((p) => p.value);
      const flagged: number[] = [];
      for (let i = 0; i < points.length; i++) if (points[i].rules.length) flagged.push(i);
      // The limit lines as their corners only (see sparseLine); the legend still reads every point's limit.
      const data: uPlot.AlignedData = [x, values, sparseLine(center), sparseLine(ucl), sparseLine(lcl)];
      const limitValue =
        (full: number[]) =>
        (_u: uPlot, _v: number | null, _s: number, idx: number | null): string =>
          idx == null || full[idx] == null ? '' : `${full[idx].toFixed(3)} ${unit}`;
      const drawSignals = (u: uPlot) => {
        if (!flagged.length) return;
        const ctx = u.ctx;
        const i0 = u.series[0].idxs?.[0] ?? 0;
        const i1 = u.series[0].idxs?.[1] ?? points.length - 1;
        const dpr = devicePixelRatio;
        const r = 5 * dpr;
        // Every marker in one path, filled and outlined once: a few thousand flagged points cost one fill.
        ctx.save();
        ctx.fillStyle = SIGNAL;
        ctx.strokeStyle = '#0f1418';
        ctx.beginPath();
        const labels: { cx: number; cy: number; text: string }[] = [];
        // A rule's number is written where it has room: beside the last one written it would be unreadable.
        let freeFrom = -Infinity;
        // A marker is drawn once per small cell: thousands of flagged points among 10,000 fall on top of
        // each other, and each one more costs the fill without changing what is seen.
        const cell = Math.max(1, r / 3);
        const taken = new Set<number>();
        for (const i of flagged) {
          if (i < i0 || i > i1) continue;
          const cx = u.valToPos(i + 1, 'x', true);
          const cy = u.valToPos(values[i], 'y', true);
          const key = Math.round(cx / cell) * 1_000_000 + Math.round(cy / cell);
          if (taken.has(key)) continue;
          taken.add(key);
          ctx.moveTo(cx, cy - r);
          ctx.lineTo(cx + r, cy);
          ctx.lineTo(cx, cy + r);
          ctx.lineTo(cx - r, cy);
          ctx.closePath();
          const text = points[i].rules.join(',');
          const half = text.length * 3.5 * dpr;
          if (cx - half >= freeFrom) {
            labels.push({ cx, cy, text });
            freeFrom = cx + half + 2 * dpr;
          }
        }
        ctx.fill();
        ctx.stroke();
        ctx.font = `${Math.round(12 * dpr)}px Barlow, sans-serif`;
        ctx.textAlign = 'center';
        for (const l of labels) ctx.fillText(l.text, l.cx, l.cy - r - 3 * dpr);
        ctx.restore();
      };
      const limitSeries = (label: string, stroke: string, full: number[], dash?: number[]): uPlot.Series => ({
        label,
        stroke,
        width: 1,
        ...(dash ? { dash } : {}),
        spanGaps: true,
        points: { show: false },
        value: limitValue(full),
      });
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
          limitSeries('Centre', CENTER, center),
          limitSeries('Upper limit', LIMIT, ucl, [6, 4]),
          limitSeries('Lower limit', LIMIT, lcl, [6, 4]),
        ],
        hooks: { draw: [drawSignals] },
      };
      // Built in two tasks: the plot's parts now, its scales, paths and first drawing in the next one.
      let init: number | undefined;
      const plot = new uPlot(opts, data, (u, start) => {
        el.appendChild(u.root);
        init = window.setTimeout(start, 0);
      });
      const over = plot.over;
      const onClick = () => {
        const idx = plot.cursor.idx;
        if (idx != null && points[idx]) void navigate(`/units/${encodeURIComponent(points[idx].serial)}`);
      };
      over.addEventListener('click', onClick);
      over.style.cursor = 'pointer';
      // The observer reports the size it finds at once: redraw only when the width really changed. (From
      // the options: the plot has no size of its own until its first drawing, and a redraw of 10,000 points
      // for nothing cost as much as the drawing itself.)
      let width = opts.width;
      const resize = new ResizeObserver(() => {
        if (el.clientWidth === width) return;
        width = el.clientWidth;
        plot.setSize({ width, height });
      });
      resize.observe(el);
      return () => {
        window.clearTimeout(init);
        resize.disconnect();
        over.removeEventListener('click', onClick);
        plot.destroy();
      };
    },
    [points, center, ucl, lcl, unit, title, height, navigate],
  );

  useEffect(() => {
    const el = host.current;
    if (!el) return;
    // Built in a task of its own, after React's commit and apart from the other chart of the view: with
    // 10,000 points each build is tens of milliseconds, and together in one task they held the page
    // (decision log: "a 10,000-point chart in tasks under 100 ms"). And after the browser's next frame: by
    // then the page is laid out, so reading the host's width costs nothing, where straight after React's
    // commit it made the browser lay out the whole new page inside the chart's task.
    let teardown: (() => void) | null = null;
    let timer: ReturnType<typeof setTimeout> | undefined;
    const frame = requestAnimationFrame(() => {
      timer = setTimeout(() => {
        teardown = drawChart(el);
      }, 0);
    });
    return () => {
      cancelAnimationFrame(frame);
      clearTimeout(timer);
      teardown?.();
    };
  }, [drawChart]);

  const exportSeries = () => ({
    title,
    unit,
    values: points.map((p) => p.value),
    center,
    ucl,
    lcl,
    flagged: points.map((p) => p.rules.length > 0),
  });
  const signals = useMemo(() => points.filter((p) => p.rules.length).length, [points]);
  return (
    <figure className="flex flex-col gap-2">
      <div className="flex flex-wrap items-center justify-between gap-2">
        <figcaption className="text-lg font-semibold text-graphite-100">{title}</figcaption>
        <CanvasChartExport hostId={id} name={id} series={exportSeries} />
      </div>
      <div
        id={id}
        ref={host}
        role="img"
        aria-label={`${title}: ${points.length} points, ${signals} breaking a rule. The list below names them.`}
        className="analysis-plot w-full"
        // The chart is drawn a moment after the page: its place is kept meanwhile.
        style={{ minHeight: height }}
      />
    </figure>
  );
}
