import { useNavigate } from 'react-router';
import type { StationView } from '#shared/schemas/stations';
import { formatRelative } from '#src/lib/format';

export const STATION_CHOICE_KEY = 'phasewright.station.id';

export function rememberedStationId(): string | null {
  try {
    return window.localStorage.getItem(STATION_CHOICE_KEY);
  } catch {
    return null;
  }
}

export function rememberStation(id: string): void {
  try {
    window.localStorage.setItem(STATION_CHOICE_KEY, id);
  } catch {
    // Without storage the operator picks the station again next time; nothing else depends on it.
  }
}

/** Which panel is this? Chosen once; the browser remembers it for the next shift. */
export function StationPicker({ stations }: { stations: StationView[] }) {
  const navigate = useNavigate();
  if (stations.length === 0)
    return (
      <p className="text-lg text-graphite-300">
        No station has been set up yet. An administrator adds stations under Admin → Stations.
      </p>
    );
  return (
    <ul className="grid gap-4 sm:grid-cols-2 xl:grid-cols-3" data-testid="station-choices">
      {stations.map((s, i) => (
        <li key={s.id}>
          <button
            type="button"
            autoFocus={i === 0}
            onClick={() => {
              rememberStation(s.id);
              void navigate(`/station/${s.id}`);
            }}
            className="chamfer chamfer-lg flex min-h-32 w-full flex-col items-start gap-1 p-5 text-left hover:[--ch-edge:var(--color-copper-400)]"
          >
            <span className="text-3xl font-bold text-graphite-50">{s.name}</span>
            <span className="text-graphite-300">
              {s.line} · {s.allowedModels.map((m) => m.code).join(', ') || 'no model'}
            </span>
            <span className="text-sm text-graphite-400">
              {s.attendedBy ? `Attended by ${s.attendedBy.displayName}` : 'Not attended'} · heard from{' '}
              {formatRelative(s.lastSeenAt)}
            </span>
          </button>
        </li>
      ))}
    </ul>
  );
}
