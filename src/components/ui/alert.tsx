import type { ReactNode } from 'react';

type AlertProps = { tone?: 'fault' | 'ok' | 'info'; title?: string; children: ReactNode };

const tones = {
  fault: { box: 'border-fault bg-fault-deep text-graphite-50', mark: 'bg-fault', word: 'Problem' },
  ok: { box: 'border-ok bg-ok-deep text-graphite-50', mark: 'bg-ok', word: 'Done' },
  info: { box: 'border-copper-400 bg-graphite-850 text-graphite-50', mark: 'bg-copper-400', word: 'Note' },
};

/** A message block; errors are announced to screen readers at once. */
export function Alert({ tone = 'info', title, children }: AlertProps) {
  const t = tones[tone];
  return (
    <div role={tone === 'fault' ? 'alert' : 'status'} className={`flex gap-3 border-l-4 p-4 ${t.box}`}>
      <span
        aria-hidden
        className={`mt-1.5 inline-block size-3 shrink-0 ${tone === 'fault' ? '' : 'rounded-full'} ${t.mark}`}
      />
      <div className="flex flex-col gap-1">
        <p className="font-semibold tracking-wide">{title ?? t.word}</p>
        <div className="text-graphite-200">{children}</div>
      </div>
    </div>
  );
}

export function Loading({ label = 'Loading…' }: { label?: string }) {
  return (
    <p role="status" className="flex items-center gap-3 py-6 text-lg text-graphite-300">
      <span
        aria-hidden
        className="inline-block size-5 animate-spin border-2 border-copper-400 border-t-transparent"
      />
      {label}
    </p>
  );
}
