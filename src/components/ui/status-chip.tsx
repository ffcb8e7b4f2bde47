import type { ReactNode } from 'react';

export type Tone = 'ok' | 'warn' | 'fault' | 'neutral' | 'accent';

const toneClass: Record<Tone, string> = {
  ok: 'border-ok text-ok-bright bg-ok-deep',
  warn: 'border-warn text-warn-bright bg-warn-deep',
  fault: 'border-fault text-fault-bright bg-fault-deep',
  neutral: 'border-graphite-500 text-graphite-200 bg-graphite-800',
  accent: 'border-copper-400 text-copper-200 bg-copper-800/40',
};

/** Each tone has its own glyph so states read without colour: circle, triangle, square, dash, diamond. */
function Glyph({ tone }: { tone: Tone }) {
  const common = {
    width: 12,
    height: 12,
    viewBox: '0 0 12 12',
    'aria-hidden': true as const,
    className: 'shrink-0',
  };
  switch (tone) {
    case 'ok':
      return (
        <svg {...common}>
          <circle cx="6" cy="6" r="5" fill="currentColor" />
        </svg>
      );
    case 'warn':
      return (
        <svg {...common}>
          <path d="M6 0.8 11.4 11H0.6Z" fill="currentColor" />
        </svg>
      );
    case 'fault':
      return (
        <svg {...common}>
          <rect x="1" y="1" width="10" height="10" fill="currentColor" />
        </svg>
      );
    case 'accent':
      return (
        <svg {...common}>
          <path d="M6 0.5 11.5 6 6 11.5 0.5 6Z" fill="currentColor" />
        </svg>
      );
    default:
      return (
        <svg {...common}>
          <rect x="1" y="5" width="10" height="2.5" fill="currentColor" />
        </svg>
      );
  }
}

export function StatusChip({ tone, children, title }: { tone: Tone; children: ReactNode; title?: string }) {
  return (
    <span
      title={title}
      className={`inline-flex items-center gap-1.5 border px-2 py-0.5 text-sm font-semibold tracking-wide whitespace-nowrap uppercase ${toneClass[tone]}`}
    >
      <Glyph tone={tone} />
      {children}
    </span>
  );
}
