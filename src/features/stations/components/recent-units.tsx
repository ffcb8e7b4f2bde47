import { formatDateTime } from '#src/lib/format';
import { useStationRecent } from '../api/stations';
import { formatOffsetDeg } from '#shared/wording';
import { VerdictMark } from '#src/components/calibrations/verdict-banner';

function clock(iso: string): string {
  const d = new Date(iso);
  return Number.isNaN(d.getTime())
    ? iso
    : d.toLocaleTimeString('en-GB', { hour: '2-digit', minute: '2-digit' });
}

/**
 * The last twenty measurements here, newest first: one row per attempt (a retested unit appears once per
 * attempt, numbered); touching one brings its unit up on the screen.
 */
export function RecentUnits({ stationId, onPick }: { stationId: string; onPick: (serial: string) => void }) {
  const recent = useStationRecent(stationId);
  const rows = recent.data ?? [];
  return (
    <section
      aria-labelledby="recent-title"
      className="flex min-h-0 flex-col gap-2"
      data-testid="recent-units"
    >
      <h2 id="recent-title" className="text-sm font-semibold tracking-widest text-graphite-400 uppercase">
        {rows.length === 1 ? 'Last measurement here' : `Last ${rows.length || 20} measurements here`}
      </h2>
      {recent.isError ? (
        <p className="text-fault">Could not read the recent units: {recent.error.message}</p>
      ) : null}
      {recent.isSuccess && rows.length === 0 ? (
        <p className="text-graphite-300">No unit has been measured at this station yet.</p>
      ) : null}
      <ul className="flex max-h-[23rem] flex-col overflow-y-auto border border-graphite-750">
        {rows.map((c) => (
          <li key={c.calibrationId} className="border-b border-graphite-800 last:border-b-0">
            <button
              type="button"
              onClick={() => onPick(c.serial)}
              title={`Measured ${formatDateTime(c.computedAt)}`}
              className="grid min-h-target w-full grid-cols-[3rem_minmax(0,1fr)_auto] items-center gap-2 px-3 text-left hover:bg-graphite-850"
            >
              <span className="font-mono text-sm text-graphite-300">{clock(c.computedAt)}</span>
              <span className="flex min-w-0 items-baseline gap-2">
                <span
                  className="truncate font-mono font-semibold text-graphite-50"
                  data-testid="recent-serial"
                >
                  {c.serial}
                </span>
                {c.attempt !== null ? (
                  <span className="shrink-0 text-sm text-graphite-300" aria-label={`attempt ${c.attempt}`}>
                    #{c.attempt}
                  </span>
                ) : null}
              </span>
              <span className="flex items-center gap-2 text-sm">
                <span className="font-mono text-graphite-300">{formatOffsetDeg(c.offsetDeg)}</span>
                <VerdictMark verdict={c.verdict} />
              </span>
            </button>
          </li>
        ))}
      </ul>
    </section>
  );
}
