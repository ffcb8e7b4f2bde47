import { describe, expect, it } from 'vitest';
import { decideQualification, nextShiftStart, type QualificationFacts } from './qualification-state';

const at = (iso: string) => new Date(iso);
const base = (over: Partial<QualificationFacts> = {}): QualificationFacts => ({
  policy: { atShiftStart: true, everyHours: 4, everyUnits: null, referenceSerials: ['R-57-01'] },
  shiftStartMinutes: [6 * 60, 14 * 60, 22 * 60],
  timeZone: 'UTC',
  lastPass: at('2026-03-02T11:00:00Z'),
  lastFailure: null,
  unitsSincePass: 0,
  override: null,
  now: at('2026-03-02T12:00:00Z'),
  ...over,
});

describe('qualification lockout rules', () => {
  it('locks nothing at a station without a policy', () => {
    const d = decideQualification(base({ policy: null, lastPass: null }));
    expect(d).toMatchObject({ kind: 'not_required', locked: false });
  });

  it('is qualified until the earlier of the next shift start and the hours limit', () => {
    // Passed 11:00, every 4 h → 15:00, but the 14:00 shift starts first.
    const d = decideQualification(base());
    expect(d.kind).toBe('qualified');
    expect(d.validUntil).toEqual(at('2026-03-02T14:00:00Z'));
    expect(d.sentence).toBe('Qualified until 14:00.');
  });

  it('is due soon in the last 30 minutes, and says how long is left', () => {
    const d = decideQualification(base({ now: at('2026-03-02T13:40:00Z') }));
    expect(d).toMatchObject({ kind: 'due_soon', locked: false });
    expect(d.sentence).toBe('Due in 20 min — measure reference unit R-57-01.');
  });

  it('locks an overdue station and names the reference unit to measure', () => {
    const d = decideQualification(base({ now: at('2026-03-02T14:00:00Z') }));
    expect(d).toMatchObject({ kind: 'overdue', locked: true });
    expect(d.sentence).toMatch(
      /^Overdue — measure reference unit R-57-01\. The qualification ran out at 14:00\.$/,
    );
  });

  it('locks a station that has never passed', () => {
    expect(decideQualification(base({ lastPass: null }))).toMatchObject({ kind: 'overdue', locked: true });
  });

  it('locks after the unit count since the last pass, and warns in the last 10 %', () => {
    const policy = { atShiftStart: false, everyHours: null, everyUnits: 50, referenceSerials: ['R-1'] };
    expect(decideQualification(base({ policy, unitsSincePass: 44 })).kind).toBe('qualified');
    expect(decideQualification(base({ policy, unitsSincePass: 46 })).sentence).toBe(
      'Due after 4 more units — measure reference unit R-1.',
    );
    expect(decideQualification(base({ policy, unitsSincePass: 50 }))).toMatchObject({
      kind: 'overdue',
      locked: true,
    });
  });

  it('locks after a failed result even inside the time window', () => {
    const d = decideQualification(
      base({
        lastFailure: {
          at: at('2026-03-02T11:30:00Z'),
          serial: 'R-57-01',
          deviationDeg: 0.52,
          toleranceDeg: 0.3,
        },
      }),
    );
    expect(d).toMatchObject({ kind: 'failed', locked: true });
    expect(d.sentence).toMatch(/read \+0\.52° from its certified value \(allowed ± 0\.30°\)/);
  });

  it('lets an engineer lift the lock until the override expires, and locks again after', () => {
    const override = { until: at('2026-03-02T15:00:00Z'), reason: 'rig repaired, reference unit in the lab' };
    const lifted = decideQualification(base({ now: at('2026-03-02T14:30:00Z'), override }));
    expect(lifted).toMatchObject({ kind: 'override', locked: false });
    expect(lifted.sentence).toMatch(/until 15:00/);
    expect(decideQualification(base({ now: at('2026-03-02T15:00:00Z'), override }))).toMatchObject({
      kind: 'overdue',
      locked: true,
    });
  });
});

describe('plant shift starts', () => {
  it('finds the next shift start in the plant time zone, across midnight', () => {
    expect(nextShiftStart(at('2026-03-02T23:00:00Z'), [360, 840, 1320], 'UTC')).toEqual(
      at('2026-03-03T06:00:00Z'),
    );
    // Berlin is UTC+1 in March before the change: 06:00 local is 05:00 UTC (IANA tz database).
    expect(nextShiftStart(at('2026-03-02T04:00:00Z'), [360], 'Europe/Berlin')).toEqual(
      at('2026-03-02T05:00:00Z'),
    );
    // After the change on 29 March 2026 Berlin is UTC+2: 06:00 local is 04:00 UTC.
    expect(nextShiftStart(at('2026-03-30T01:00:00Z'), [360], 'Europe/Berlin')).toEqual(
      at('2026-03-30T04:00:00Z'),
    );
    expect(nextShiftStart(at('2026-03-02T04:00:00Z'), [], 'UTC')).toBeNull();
  });
});
