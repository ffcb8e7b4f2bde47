/** Three phase strokes, 120° apart, inside the chamfered frame: the Phasewright mark. */
const WAVE_POINTS = 24;
function wave(phaseDeg: number): string {
  const points: string[] = [];
  for (let i = 0; i <= WAVE_POINTS; i += 1) {
    const x = 7 + (i / WAVE_POINTS) * 26;
    const y = 20 - 7 * Math.sin(((i / WAVE_POINTS) * 360 - phaseDeg) * (Math.PI / 180));
    points.push(`${x.toFixed(2)},${y.toFixed(2)}`);
  }
  return points.join(' ');
}
const WAVES = [
  { color: 'var(--color-phase-a)', points: wave(0) },
  { color: 'var(--color-phase-b)', points: wave(120) },
  { color: 'var(--color-phase-c)', points: wave(240) },
];

export function BrandMark({ size = 40 }: { size?: number }) {
  return (
    <svg width={size} height={size} viewBox="0 0 40 40" aria-hidden className="shrink-0">
      <path
        d="M8 1.5H38.5V32L32 38.5H1.5V8Z"
        fill="var(--color-graphite-850)"
        stroke="var(--color-copper-400)"
        strokeWidth="2.5"
      />
      {WAVES.map((w) => (
        <polyline
          key={w.color}
          points={w.points}
          fill="none"
          stroke={w.color}
          strokeWidth="2.4"
          strokeLinecap="round"
        />
      ))}
    </svg>
  );
}

export function BrandName({ className = '' }: { className?: string }) {
  return (
    <span className={`font-bold tracking-[0.08em] uppercase ${className}`}>
      Phase<span className="text-copper-300">wright</span>
    </span>
  );
}
