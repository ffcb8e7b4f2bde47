import { expect, it } from 'vitest';
import { periodKeyer, plantInstant, presetStart, shiftAt } from './plant-time';

const SHIFTS = [
  { name: 'Early', startMinute: 6 * 60 },
  { name: 'Late', startMinute: 14 * 60 },
  { name: 'Night', startMinute: 22 * 60 },
];
const BERLIN = 'Europe/Berlin';

it('starts the presets at the shift start and local midnights of the plant’s zone', () => {
  // 2026-11-19 09:30 UTC is 10:30 in Berlin (UTC+1 in winter): the early shift began at 05:00 UTC.
  const now = new Date('2026-11-19T09:30:00Z');
  expect(presetStart('shift', now, BERLIN, SHIFTS)?.toISOString()).toBe('2026-11-19T05:00:00.000Z');
  expect(presetStart('day', now, BERLIN, SHIFTS)?.toISOString()).toBe('2026-11-18T23:00:00.000Z');
  expect(presetStart('week', now, BERLIN, SHIFTS)?.toISOString()).toBe('2026-11-12T23:00:00.000Z');
  // 29 days back is 21 October, still summer time (UTC+2) until the 25th: that midnight was 22:00 UTC.
  expect(presetStart('month', now, BERLIN, SHIFTS)?.toISOString()).toBe('2026-10-20T22:00:00.000Z');
  expect(presetStart('all', now, BERLIN, SHIFTS)).toBeNull();
  // Without shifts, "this shift" is the last 8 hours.
  expect(presetStart('shift', now, 'UTC', [])?.toISOString()).toBe('2026-11-19T01:30:00.000Z');
  expect(plantInstant('2026-10-20', '00:00', BERLIN).toISOString()).toBe('2026-10-19T22:00:00.000Z');
});

it('puts a night shift’s early morning hours in the shift that started the evening before', () => {
  // 01:00 Berlin on the 19th belongs to the night shift of the 18th.
  expect(shiftAt(new Date('2026-11-19T00:00:00Z'), SHIFTS, BERLIN)).toEqual({
    name: 'Night',
    start: new Date('2026-11-18T21:00:00Z'),
  });
  const key = periodKeyer('shift', BERLIN, SHIFTS);
  expect(key(new Date('2026-11-19T00:00:00Z'))).toBe('2026-11-18 Night');
  expect(key(new Date('2026-11-19T05:00:00Z'))).toBe('2026-11-19 Early');
  // 13:59 Berlin is still the early shift; 14:00 is the late one.
  expect(key(new Date('2026-11-19T12:59:00Z'))).toBe('2026-11-19 Early');
  expect(key(new Date('2026-11-19T13:00:00Z'))).toBe('2026-11-19 Late');
  const hour = periodKeyer('hour', BERLIN, SHIFTS);
  expect(hour(new Date('2026-11-19T12:59:00Z'))).toBe('2026-11-19 13:00');
  expect(periodKeyer('shift', 'UTC', [])(new Date('2026-11-19T12:59:00Z'))).toBe('2026-11-19');
});
