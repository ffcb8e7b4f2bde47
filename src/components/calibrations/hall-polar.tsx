import type { EdgeTypeResult } from '#shared/schemas/calibration-result';
import type { Recipe } from '#shared/schemas/recipe';
import { nominalEdgeDeg } from '#shared/calibration/hall-layout';
import { formatSignedDeg } from '#shared/wording';

const PHASE_COLOURS = { A: 'var(--color-phase-a)', B: 'var(--color-phase-b)', C: 'var(--color-phase-c)' };
const SIZE = 300;
const CENTRE = SIZE / 2;
const RING = 96;

/**
 * Where an edge sits when the magnet is exactly where the recipe says: the engine's hall model (domain
 * contract), turning forward, so the dial and the computation cannot disagree.
 */
const nominalOf = (hallRiseDeg: Recipe['hallRiseDeg'], e: EdgeTypeResult): number =>
  nominalEdgeDeg(hallRiseDeg, e.sensor, e.edge, 'forward');

/**
 * How much to widen angular deviations so they can be seen: residuals are a degree or two on a 360°
 * dial. Picks a round factor that draws the larger of the worst residual and the limit at about 14°.
 */
export function exaggeration(edges: EdgeTypeResult[], limitDeg: number | null): number {
  const worst = Math.max(limitDeg ?? 0, ...edges.map((e) => Math.abs(e.residualDeg ?? 0)));
  if (worst <= 0) return 1;
  const wanted = 14 / worst;
  const steps = [1, 2, 5, 10, 20, 50];
  return steps.filter((s) => s <= wanted).pop() ?? 1;
}

/** Dial angle (0° at the top, growing clockwise) to SVG coordinates at radius r. */
function point(deg: number, r: number): [number, number] {
  const rad = (deg * Math.PI) / 180;
  return [CENTRE + r * Math.sin(rad), CENTRE - r * Math.cos(rad)];
}

function arc(fromDeg: number, toDeg: number, r: number): string {
  const [x1, y1] = point(fromDeg, r);
  const [x2, y2] = point(toDeg, r);
  const large = toDeg - fromDeg > 180 ? 1 : 0;
  return `M${x1.toFixed(2)} ${y1.toFixed(2)}A${r} ${r} 0 ${large} 1 ${x2.toFixed(2)} ${y2.toFixed(2)}`;
}

/** A triangle pointing outwards (rise) or inwards (fall), centred on the dial angle at radius r. */
function marker(deg: number, r: number, kind: 'rise' | 'fall', size: number): string {
  const dir = kind === 'rise' ? 1 : -1;
  const tip = point(deg, r + dir * size);
  const spread = (size * 0.9 * 180) / (Math.PI * r);
  const a = point(deg - spread, r - dir * size * 0.6);
  const b = point(deg + spread, r - dir * size * 0.6);
  return `M${tip[0].toFixed(2)} ${tip[1].toFixed(2)}L${a[0].toFixed(2)} ${a[1].toFixed(2)}L${b[0].toFixed(2)} ${b[1].toFixed(2)}Z`;
}

type HallPolarProps = {
  edges: EdgeTypeResult[];
  hallRiseDeg: Recipe['hallRiseDeg'];
  /** Largest accepted |residual|, electrical degrees (the recipe's edgeResidualDeg). */
  limitDeg: number | null;
};

/**
 * The six hall edges on an electrical-angle dial: hollow markers at their nominal positions, filled ones
 * where they were measured (nominal + residual), the accepted band shaded around each nominal. Rise edges
 * point outwards, fall edges inwards, so sensor and edge read without colour.
 */
export function HallPolar({ edges, hallRiseDeg, limitDeg }: HallPolarProps) {
  const k = exaggeration(edges, limitDeg);
  const summary = edges
    .map(
      (e) =>
        `${e.sensor} ${e.edge} at ${nominalOf(hallRiseDeg, e)}°: ${e.residualDeg === null ? 'not measured' : formatSignedDeg(e.residualDeg)}`,
    )
    .join('; ');
  return (
    <figure className="flex flex-col items-center gap-1" data-testid="hall-polar">
      <svg
        viewBox={`0 0 ${SIZE} ${SIZE}`}
        width={SIZE}
        height={SIZE}
        role="img"
        aria-label={`Hall edges against nominal positions, deviations drawn ${k} times larger. ${summary}`}
        className="max-w-full"
      >
        <circle
          cx={CENTRE}
          cy={CENTRE}
          r={RING}
          fill="none"
          stroke="var(--color-graphite-600)"
          strokeWidth="2"
        />
        <circle
          cx={CENTRE}
          cy={CENTRE}
          r={RING - 34}
          fill="none"
          stroke="var(--color-graphite-750)"
          strokeWidth="1"
        />
        {[0, 90, 180, 270].map((deg) => {
          const [x1, y1] = point(deg, RING - 40);
          const [x2, y2] = point(deg, RING + 6);
          const [tx, ty] = point(deg, 20);
          return (
            <g key={deg}>
              <line x1={x1} y1={y1} x2={x2} y2={y2} stroke="var(--color-graphite-700)" strokeWidth="1" />
              <text x={tx} y={ty + 4} textAnchor="middle" fontSize="11" fill="var(--color-graphite-400)">
                {deg}°
              </text>
            </g>
          );
        })}
        {edges.map((e) => {
          const nominal = nominalOf(hallRiseDeg, e);
          const colour = PHASE_COLOURS[e.sensor];
          const outside = limitDeg !== null && e.residualDeg !== null && Math.abs(e.residualDeg) > limitDeg;
          const measured = e.residualDeg === null ? null : nominal + k * e.residualDeg;
          const [lx, ly] = point(nominal, RING + 34);
          const [sx1, sy1] = point(nominal, 8);
          return (
            <g key={`${e.sensor}-${e.edge}`}>
              <line
                x1={sx1}
                y1={sy1}
                x2={point(nominal, RING)[0]}
                y2={point(nominal, RING)[1]}
                stroke={colour}
                strokeOpacity="0.35"
                strokeDasharray="3 4"
              />
              {limitDeg !== null ? (
                <path
                  d={arc(nominal - k * limitDeg, nominal + k * limitDeg, RING)}
                  stroke="var(--color-ok)"
                  strokeOpacity="0.35"
                  strokeWidth="12"
                  fill="none"
                />
              ) : null}
              <path
                d={marker(nominal, RING, e.edge, 9)}
                fill="var(--color-graphite-950)"
                stroke={colour}
                strokeWidth="2"
              />
              {measured !== null ? (
                <path
                  d={marker(measured, RING, e.edge, 7)}
                  fill={outside ? 'var(--color-fault)' : colour}
                  stroke={outside ? 'white' : 'var(--color-graphite-950)'}
                  strokeWidth="1.5"
                />
              ) : null}
              <text x={lx} y={ly - 2} textAnchor="middle" fontSize="13" fontWeight="700" fill={colour}>
                {e.sensor}
                {e.edge === 'rise' ? '↑' : '↓'}
              </text>
              <text
                x={lx}
                y={ly + 12}
                textAnchor="middle"
                fontSize="12"
                fontWeight={outside ? 700 : 500}
                fill={outside ? 'var(--color-fault)' : 'var(--color-graphite-200)'}
              >
                {e.residualDeg === null ? 'none' : `${formatSignedDeg(e.residualDeg, 1)}${outside ? ' !' : ''}`}
              </text>
            </g>
          );
        })}
      </svg>
      <figcaption className="max-w-[300px] text-center text-sm text-graphite-400">
        Hollow: nominal · filled: measured · green band: ±{limitDeg ?? '—'}° limit · deviations ×{k}
      </figcaption>
    </figure>
  );
}
