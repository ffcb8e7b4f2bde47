import type { Verdict } from './calibration-format';
import { VERDICT_LABELS } from './calibration-format';

const STYLE: Record<Verdict, { box: string; text: string }> = {
  pass: { box: '[--ch-fill:var(--color-ok-deep)] [--ch-edge:var(--color-ok)]', text: 'text-ok' },
  fail: { box: '[--ch-fill:var(--color-fault-deep)] [--ch-edge:var(--color-fault)]', text: 'text-fault' },
  unusable: { box: '[--ch-fill:var(--color-warn-deep)] [--ch-edge:var(--color-warn)]', text: 'text-warn' },
};

/** Circle with a tick for pass, square with a cross for fail, triangle with a bar for no result. */
function VerdictShape({ verdict, size }: { verdict: Verdict; size: number }) {
  const common = { width: size, height: size, viewBox: '0 0 48 48', 'aria-hidden': true as const };
  if (verdict === 'pass')
    return (
      <svg {...common}>
        <circle cx="24" cy="24" r="21" fill="currentColor" />
        <path d="M13 25l7 7 15-16" fill="none" stroke="var(--color-graphite-950)" strokeWidth="5.5" />
      </svg>
    );
  if (verdict === 'fail')
    return (
      <svg {...common}>
        <rect x="3" y="3" width="42" height="42" fill="currentColor" />
        <path d="M14 14 34 34M34 14 14 34" stroke="var(--color-graphite-950)" strokeWidth="6" />
      </svg>
    );
  return (
    <svg {...common}>
      <path d="M24 2 46 44H2Z" fill="currentColor" />
      <path d="M24 16v14M24 35v4" stroke="var(--color-graphite-950)" strokeWidth="5" />
    </svg>
  );
}

/** The verdict as the operator reads it from two metres: a huge word and a shape, not colour alone. */
export function VerdictBanner({ verdict, size = 'huge' }: { verdict: Verdict; size?: 'huge' | 'large' }) {
  const s = STYLE[verdict];
  const huge = size === 'huge';
  return (
    <div
      className={`chamfer chamfer-lg flex items-center gap-5 px-6 py-4 ${s.box}`}
      data-testid="verdict"
      data-verdict={verdict}
    >
      <span className={s.text}>
        <VerdictShape verdict={verdict} size={huge ? 96 : 56} />
      </span>
      <span
        className={`font-bold tracking-[0.06em] uppercase leading-none ${s.text} ${huge ? 'text-[6.5rem] 2xl:text-[9rem]' : 'text-6xl'}`}
      >
        {VERDICT_LABELS[verdict]}
      </span>
    </div>
  );
}

export function VerdictMark({ verdict }: { verdict: Verdict }) {
  return (
    <span className={`inline-flex items-center gap-2 font-bold uppercase ${STYLE[verdict].text}`}>
      <VerdictShape verdict={verdict} size={18} />
      {VERDICT_LABELS[verdict]}
    </span>
  );
}
