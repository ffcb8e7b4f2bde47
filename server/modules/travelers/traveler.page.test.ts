import { describe, expect, it } from 'vitest';
import { formatTime, formatTimeInZone } from './traveler.page';

describe('times printed on unit documents', () => {
  it('prints a UTC time exactly as the zone formatter prints it, to the second, truncated', () => {
    // Instants spread over 1970–2099, with milliseconds, leap days and each end of the day.
    const instants = [
      '2026-12-02T14:03:11.999Z',
      '2028-02-29T00:00:00.000Z',
      '1999-12-31T23:59:59.999Z',
      '2026-03-29T01:00:00+01:00',
      '2026-12-02T14:03:11.204-07:30',
    ];
    for (let i = 0; i < 400; i += 1)
      instants.push(new Date(Date.UTC(1970, 0, 1) + i * 9_876_543_211).toISOString());
    for (const iso of instants) expect(formatTime(iso, 'UTC'), iso).toBe(formatTimeInZone(iso, 'UTC'));
    expect(formatTime('2026-12-02T14:03:11.999Z', 'UTC')).toBe('2026-12-02 14:03:11 UTC');
  });

  it('states the offset of any other zone', () => {
    expect(formatTime('2026-12-02T14:03:11Z', 'Europe/Berlin')).toBe('2026-12-02 15:03:11 UTC+01:00');
    expect(formatTime('2026-07-02T03:59:59.999Z', 'America/New_York')).toBe('2026-07-01 23:59:59 UTC-04:00');
  });
});
