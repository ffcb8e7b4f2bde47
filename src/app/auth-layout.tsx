import type { ReactNode } from 'react';
import { BrandMark, BrandName } from '../components/ui/brand-mark';

/** The frame around the pages a person sees before signing in. */
export function AuthLayout({
  title,
  lead,
  children,
}: {
  title: string;
  lead?: ReactNode;
  children: ReactNode;
}) {
  return (
    <div className="grid min-h-dvh lg:grid-cols-[minmax(0,5fr)_minmax(0,6fr)]">
      <div className="relative hidden overflow-hidden border-r border-graphite-800 bg-graphite-900 lg:flex lg:flex-col lg:justify-between lg:p-12">
        <WindingPattern />
        <div className="relative flex items-center gap-4">
          <BrandMark size={56} />
          <BrandName className="text-3xl text-graphite-50" />
        </div>
        <div className="relative flex max-w-md flex-col gap-4">
          <p className="text-4xl leading-tight font-semibold text-graphite-50">
            Every motor leaves the line with its hall sensors where the drive expects them.
          </p>
          <div className="phase-rule" aria-hidden />
          <p className="text-lg text-graphite-300">
            End-of-line hall-offset calibration for brushless motors: measured at the station, computed here,
            kept for the life of each unit.
          </p>
        </div>
        <p className="relative text-sm tracking-wider text-graphite-400 uppercase">
          Phase A · Phase B · Phase C
        </p>
      </div>
      <main id="main" className="flex flex-col items-center justify-center px-5 py-10 sm:px-10">
        <div className="mb-8 flex items-center gap-3 lg:hidden">
          <BrandMark size={44} />
          <BrandName className="text-2xl text-graphite-50" />
        </div>
        <div className="chamfer chamfer-lg w-full max-w-lg p-7 [--ch-edge:var(--color-graphite-600)] sm:p-9">
          <h1 className="text-3xl font-bold tracking-wide text-graphite-50">{title}</h1>
          <div className="phase-rule mt-2 mb-4" aria-hidden />
          {lead ? <p className="mb-6 text-lg text-graphite-300">{lead}</p> : null}
          {children}
        </div>
      </main>
    </div>
  );
}

/** Three phase-shifted sine traces across the brand panel: decoration only. */
function WindingPattern() {
  const traces = [
    { color: 'var(--color-phase-a)', shift: 0 },
    { color: 'var(--color-phase-b)', shift: 120 },
    { color: 'var(--color-phase-c)', shift: 240 },
  ];
  const path = (shiftDeg: number) => {
    const points: string[] = [];
    for (let x = 0; x <= 800; x += 8) {
      const y = 300 + 120 * Math.sin(((x / 400) * 360 - shiftDeg) * (Math.PI / 180));
      points.push(`${x},${y.toFixed(1)}`);
    }
    return points.join(' ');
  };
  return (
    <svg
      className="pointer-events-none absolute inset-x-0 top-1/2 w-[140%] -translate-y-1/2 opacity-25"
      viewBox="0 0 800 600"
      aria-hidden
    >
      {[0, 1, 2, 3, 4, 5].map((i) => (
        <line
          key={i}
          x1={i * 133.3}
          x2={i * 133.3}
          y1="120"
          y2="480"
          stroke="var(--color-graphite-700)"
          strokeDasharray="4 8"
        />
      ))}
      {traces.map((t) => (
        <polyline key={t.color} points={path(t.shift)} fill="none" stroke={t.color} strokeWidth="3" />
      ))}
    </svg>
  );
}
