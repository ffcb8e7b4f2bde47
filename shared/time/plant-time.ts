// Time in the plant's time zone: the statistics' time presets (this shift, today, the last 7 or 30 days) and
// subgroups by hour or by shift. Instants are UTC; local dates and clock times are read through Intl, so
// daylight-saving changes fall where the zone database puts them.
import { localInstant, zoneOffsetMs } from '../calibration/qualification-state';

export const TIME_PRESETS = ['all', 'shift', 'day', 'week', 'month', 'custom'] as const;
export type TimePreset = (typeof TIME_PRESETS)[number];

export interface PlantShift {
  name: string;
  /** Minutes after local midnight. */
  startMinute: number;
}

/** Local calendar date and minutes after midnight of an instant. */
function local(at: number, timeZone: string) {
  const l = new Date(at + zoneOffsetMs(at, timeZone));
  return {
    y: l.getUTCFullYear(),
    m: l.getUTCMonth(),
    d: l.getUTCDate(),
    minutes: l.getUTCHours() * 60 + l.getUTCMinutes(),
  };
}

/** The start of the shift running at `at` (the latest shift start at or before it), with its name. */
export function shiftAt(
  at: Date,
  shifts: readonly PlantShift[],
  timeZone: string,
): { name: string; start: Date } | null {
  if (!shifts.length) return null;
  const t = at.getTime();
  const l = local(t, timeZone);
  let best: { name: string; start: number } | null = null;
  for (let day = -1; day <= 0; day++)
    for (const s of shifts) {
      const start = localInstant(l.y, l.m, l.d + day, s.startMinute, timeZone);
      if (start <= t && (!best || start > best.start)) best = { name: s.name, start };
    }
  return best && { name: best.name, start: new Date(best.start) };
}

/**
 * Where a time preset starts at `now`: this shift (since its start; the last 8 hours without shifts), today
 * (since local midnight), the last 7 or 30 days (since local midnight 6 or 29 days ago). Null: no bound.
 */
export function presetStart(
  preset: TimePreset,
  now: Date,
  timeZone: string,
  shifts: readonly PlantShift[],
): Date | null {
  const l = local(now.getTime(), timeZone);
  const midnight = (daysBack: number) => new Date(localInstant(l.y, l.m, l.d - daysBack, 0, timeZone));
  switch (preset) {
    case 'shift':
      return shiftAt(now, shifts, timeZone)?.start ?? new Date(now.getTime() - 8 * 3_600_000);
    case 'day':
      return midnight(0);
    case 'week':
      return midnight(6);
    case 'month':
      return midnight(29);
    default:
      return null;
  }
}

/** The instant of a local date and time ("2026-11-05", "06:00") in the plant's zone. */
export function plantInstant(date: string, time: string, timeZone: string): Date {
  const [y, m, d] = date.split('-').map(Number);
  const [hh, mm] = time.split(':').map(Number);
  return new Date(localInstant(y, m - 1, d, hh * 60 + mm, timeZone));
}

const pad = (n: number) => String(n).padStart(2, '0');

/**
 * A function giving the subgroup period of an instant: its local hour ("2026-11-05 14:00") or its shift
 * ("2026-11-05 Early", dated by the shift's start). Zone offsets are cached per UTC hour: they change only on
 * hour boundaries in the zones plants are in.
 */
export function periodKeyer(
  by: 'hour' | 'shift',
  timeZone: string,
  shifts: readonly PlantShift[],
): (at: Date) => string {
  const offsets = new Map<number, number>();
  const offset = (t: number) => {
    const h = Math.floor(t / 3_600_000);
    let o = offsets.get(h);
    if (o === undefined) {
      o = zoneOffsetMs(h * 3_600_000, timeZone);
      offsets.set(h, o);
    }
    return o;
  };
  const sorted = [...shifts].sort((a, b) => a.startMinute - b.startMinute);
  return (at) => {
    const t = at.getTime();
    const l = new Date(t + offset(t));
    const date = `${l.getUTCFullYear()}-${pad(l.getUTCMonth() + 1)}-${pad(l.getUTCDate())}`;
    const minutes = l.getUTCHours() * 60 + l.getUTCMinutes();
    if (by === 'hour') return `${date} ${pad(l.getUTCHours())}:00`;
    // A plant without shifts works one shift a day.
    if (!sorted.length) return date;
    const today = sorted.filter((s) => s.startMinute <= minutes).pop();
    if (today) return `${date} ${today.name}`;
    // Before the first start of the day: the previous day's last shift.
    const prev = new Date(Date.UTC(l.getUTCFullYear(), l.getUTCMonth(), l.getUTCDate() - 1));
    return `${prev.getUTCFullYear()}-${pad(prev.getUTCMonth() + 1)}-${pad(prev.getUTCDate())} ${sorted[sorted.length - 1].name}`;
  };
}

/** An instant as the plant's local "YYYY-MM-DDTHH:mm" (the value of a datetime-local field). */
export function plantLocalInput(at: Date, timeZone: string): string {
  const t = at.getTime();
  const l = new Date(t + zoneOffsetMs(t, timeZone));
  return `${l.getUTCFullYear()}-${pad(l.getUTCMonth() + 1)}-${pad(l.getUTCDate())}T${pad(l.getUTCHours())}:${pad(l.getUTCMinutes())}`;
}
