import { formatSignedDeg } from '#shared/wording';
import type { QualificationState } from '#shared/schemas/qualification';
import { useStationQualification } from '../api/qualification';

const look: Record<
  QualificationState['kind'],
  { box: string; word: string; shape: 'circle' | 'triangle' | 'square' | 'diamond' | 'dash' }
> = {
  not_required: {
    box: 'border-graphite-500 bg-graphite-850',
    word: 'No qualification needed',
    shape: 'dash',
  },
  qualified: { box: 'border-ok bg-ok-deep', word: 'Qualified', shape: 'circle' },
  due_soon: { box: 'border-warn bg-warn-deep', word: 'Qualification due', shape: 'triangle' },
  overdue: { box: 'border-fault bg-fault-deep', word: 'Locked: qualification overdue', shape: 'square' },
  failed: { box: 'border-fault bg-fault-deep', word: 'Locked: qualification failed', shape: 'square' },
  override: {
    box: 'border-copper-400 bg-graphite-850',
    word: 'Lock lifted by an engineer',
    shape: 'diamond',
  },
};

function Shape({ shape }: { shape: (typeof look)[keyof typeof look]['shape'] }) {
  const common = {
    width: 28,
    height: 28,
    viewBox: '0 0 12 12',
    'aria-hidden': true as const,
    className: 'shrink-0',
  };
  switch (shape) {
    case 'circle':
      return (
        <svg {...common} className="shrink-0 text-ok-bright">
          <circle cx="6" cy="6" r="5" fill="currentColor" />
        </svg>
      );
    case 'triangle':
      return (
        <svg {...common} className="shrink-0 text-warn-bright">
          <path d="M6 0.8 11.4 11H0.6Z" fill="currentColor" />
        </svg>
      );
    case 'square':
      return (
        <svg {...common} className="shrink-0 text-fault-bright">
          <rect x="1" y="1" width="10" height="10" fill="currentColor" />
        </svg>
      );
    case 'diamond':
      return (
        <svg {...common} className="shrink-0 text-copper-300">
          <path d="M6 0.5 11.5 6 6 11.5 0.5 6Z" fill="currentColor" />
        </svg>
      );
    default:
      return (
        <svg {...common} className="shrink-0 text-graphite-300">
          <rect x="1" y="5" width="10" height="2" fill="currentColor" />
        </svg>
      );
  }
}

function clock(iso: string, timeZone: string) {
  return new Intl.DateTimeFormat('en-GB', {
    timeZone,
    hour: '2-digit',
    minute: '2-digit',
    hourCycle: 'h23',
  }).format(new Date(iso));
}

/**
 * A station's qualification state in words and shape: whether it may calibrate production units, until
 * when, and which reference unit to measure when it may not. Hidden where no qualification is required.
 */
export function QualificationBanner({ stationId }: { stationId: string }) {
  const q = useStationQualification(stationId);
  if (!q.data || q.data.kind === 'not_required') return null;
  const s = q.data;
  const l = look[s.kind];
  const last = s.lastRun;
  // Rounded to the 0.01° shown, so a reading on the certified value never prints as −0.00°.
  const dev = last?.deviationDeg == null ? null : Math.round(last.deviationDeg * 100) / 100 || 0;
  return (
    <section
      aria-labelledby="qualification-title"
      className={`flex items-start gap-4 border-l-8 p-4 ${l.box}`}
      data-testid="qualification-banner"
      data-kind={s.kind}
      role="status"
    >
      <Shape shape={l.shape} />
      <div className="flex min-w-0 flex-col gap-1">
        <h2 id="qualification-title" className="text-2xl font-bold text-graphite-50">
          {l.word}
        </h2>
        <p className="text-xl text-graphite-50">{s.sentence}</p>
        {s.locked ? (
          <p className="text-lg text-graphite-100">
            Production units are refused until then. Scan the reference unit and spin it as usual: its reading
            is checked against its certified offset and does not change the unit, count as production or print
            a traveler.
          </p>
        ) : null}
        {last ? (
          <p className="text-base text-graphite-200" data-testid="qualification-last">
            Last reference reading: {last.serial} at {clock(last.measuredAt, s.timeZone)},{' '}
            {last.offsetDeg.toFixed(2)}°
            {dev !== null
              ? `, ${formatSignedDeg(dev)} from certified (± ${last.toleranceDeg.toFixed(2)}° allowed)`
              : ''}{' '}
            —{' '}
            {last.verdict === 'pass'
              ? 'passed'
              : last.verdict === 'fail'
                ? 'failed'
                : 'recorded for certification'}
            .
          </p>
        ) : null}
      </div>
    </section>
  );
}
