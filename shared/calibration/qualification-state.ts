// Whether a station may calibrate production units, from its qualification policy and history.
// Pure: the server gathers the facts, this decides; the same rules explain the state on the screen.

import { formatSignedDeg } from '../wording';

export interface QualificationPolicyRule {
  /** A qualification is due at every plant shift start. */
  atShiftStart: boolean;
  /** …and at most this many hours after the last passing qualification (null: no time limit). */
  everyHours: number | null;
  /** …and after this many production measurements (null: no count limit). */
  everyUnits: number | null;
  /** Serials of the reference units that qualify this station (any one of them will do). */
  referenceSerials: string[];
}

export interface QualificationFacts {
  policy: QualificationPolicyRule | null;
  /** Plant shift starts in minutes after local midnight. */
  shiftStartMinutes: number[];
  timeZone: string;
  lastPass: Date | null;
  /** The latest qualification result, when it failed (a pass afterwards clears it). */
  lastFailure: { at: Date; serial: string; deviationDeg: number | null; toleranceDeg: number } | null;
  /** Production measurements posted since the last passing qualification. */
  unitsSincePass: number;
  override: { until: Date; reason: string } | null;
  now: Date;
}

export type QualificationKind = 'not_required' | 'qualified' | 'due_soon' | 'overdue' | 'failed' | 'override';

export interface QualificationDecision {
  kind: QualificationKind;
  /** True when production measurements are refused. */
  locked: boolean;
  /** When the current qualification stops being valid by time (shift start or hours), if it is. */
  validUntil: Date | null;
  /** Production units left before the count limit, when there is one. */
  unitsLeft: number | null;
  /** What the station is short of, in words ("overdue — measure reference unit R-57-01"). */
  sentence: string;
}

/** A qualification is "due soon" in its last 30 minutes, or its last 10 % of units (at least 1). */
export const DUE_SOON_MINUTES = 30;

export function zoneOffsetMs(at: number, timeZone: string): number {
  const parts = new Intl.DateTimeFormat('en-US', {
    timeZone,
    hourCycle: 'h23',
    year: 'numeric',
    month: '2-digit',
    day: '2-digit',
    hour: '2-digit',
    minute: '2-digit',
    second: '2-digit',
  }).formatToParts(new Date(at));
  const n = (t: string) => Number(parts.find((p) => p.type === t)!.value);
  return (
    Date.UTC(n('year'), n('month') - 1, n('day'), n('hour'), n('minute'), n('second')) - (at - (at % 1000))
  );
}

/** The instant of a local wall-clock time (minutes after midnight of a local date) in a time zone. */
export function localInstant(y: number, m: number, d: number, minutes: number, timeZone: string): number {
  const guess = Date.UTC(y, m, d, 0, minutes);
  const first = guess - zoneOffsetMs(guess, timeZone);
  // Once more at the found instant, so a daylight-saving change between the two lands right.
  return guess - zoneOffsetMs(first, timeZone);
}

/** The first plant shift start strictly after `after`, or null without shifts. */
export function nextShiftStart(after: Date, shiftStartMinutes: number[], timeZone: string): Date | null {
  if (!shiftStartMinutes.length) return null;
  const t = after.getTime();
  const local = new Date(t + zoneOffsetMs(t, timeZone));
  let best: number | null = null;
  for (let day = -1; day <= 2; day++) {
    for (const minutes of shiftStartMinutes) {
      const at = localInstant(
        local.getUTCFullYear(),
        local.getUTCMonth(),
        local.getUTCDate() + day,
        minutes,
        timeZone,
      );
      if (at > t && (best === null || at < best)) best = at;
    }
  }
  return best === null ? null : new Date(best);
}

/** "14:00" in the plant's time zone. */
export function clockTime(at: Date, timeZone: string): string {
  return new Intl.DateTimeFormat('en-GB', {
    timeZone,
    hour: '2-digit',
    minute: '2-digit',
    hourCycle: 'h23',
  }).format(at);
}

function minutesText(ms: number): string {
  const min = Math.max(1, Math.ceil(ms / 60_000));
  return min >= 120 ? `${Math.floor(min / 60)} h ${min % 60} min` : `${min} min`;
}

/**
 * The rules: no policy, no lock. A failed latest result locks; so does having never passed, passing
 * the time limit (the earlier of the next shift start and the hours), or the unit count. An engineer's
 * override lifts any lock until it expires. Otherwise the station is qualified, "due soon" near the end.
 */
export function decideQualification(f: QualificationFacts): QualificationDecision {
  if (!f.policy) {
    return {
      kind: 'not_required',
      locked: false,
      validUntil: null,
      unitsLeft: null,
      sentence: 'No qualification is required at this station.',
    };
  }
  const p = f.policy;
  const refs = p.referenceSerials.length ? p.referenceSerials.join(' or ') : '(none chosen: ask an engineer)';
  const measure = `measure reference unit ${refs}`;
  const overrideActive = f.override && f.override.until.getTime() > f.now.getTime() ? f.override : null;

  let validUntil: Date | null = null;
  let unitsLeft: number | null = null;
  if (f.lastPass) {
    const limits: number[] = [];
    if (p.everyHours !== null) limits.push(f.lastPass.getTime() + p.everyHours * 3_600_000);
    if (p.atShiftStart) {
      const shift = nextShiftStart(f.lastPass, f.shiftStartMinutes, f.timeZone);
      if (shift) limits.push(shift.getTime());
    }
    validUntil = limits.length ? new Date(Math.min(...limits)) : null;
    unitsLeft = p.everyUnits !== null ? p.everyUnits - f.unitsSincePass : null;
  }

  let lockedKind: 'failed' | 'overdue' | null = null;
  let lockSentence = '';
  if (f.lastFailure) {
    lockedKind = 'failed';
    const dev = f.lastFailure.deviationDeg;
    lockSentence =
      dev === null
        ? `Qualification failed: reference unit ${f.lastFailure.serial} could not be measured. Check the rig, then ${measure} again.`
        : `Qualification failed: reference unit ${f.lastFailure.serial} read ${formatSignedDeg(dev)} from its certified value (allowed ± ${f.lastFailure.toleranceDeg.toFixed(2)}°). Check the rig, then ${measure} again.`;
  } else if (!f.lastPass) {
    lockedKind = 'overdue';
    lockSentence = `Overdue — ${measure}. The station has not been qualified yet.`;
  } else if (validUntil && f.now.getTime() >= validUntil.getTime()) {
    lockedKind = 'overdue';
    lockSentence = `Overdue — ${measure}. The qualification ran out at ${clockTime(validUntil, f.timeZone)}.`;
  } else if (unitsLeft !== null && unitsLeft <= 0) {
    lockedKind = 'overdue';
    lockSentence = `Overdue — ${measure}. ${p.everyUnits} production units have been measured since the last qualification.`;
  }

  if (lockedKind) {
    if (overrideActive) {
      return {
        kind: 'override',
        locked: false,
        validUntil: overrideActive.until,
        unitsLeft,
        sentence: `Lock lifted by an engineer until ${clockTime(overrideActive.until, f.timeZone)} (${overrideActive.reason}). Then ${measure}.`,
      };
    }
    return { kind: lockedKind, locked: true, validUntil, unitsLeft, sentence: lockSentence };
  }

  const msLeft = validUntil ? validUntil.getTime() - f.now.getTime() : Infinity;
  const soonUnits = p.everyUnits !== null ? Math.max(1, Math.ceil(p.everyUnits * 0.1)) : 0;
  if (msLeft <= DUE_SOON_MINUTES * 60_000) {
    return {
      kind: 'due_soon',
      locked: false,
      validUntil,
      unitsLeft,
      sentence: `Due in ${minutesText(msLeft)} — ${measure}.`,
    };
  }
  if (unitsLeft !== null && unitsLeft <= soonUnits) {
    return {
      kind: 'due_soon',
      locked: false,
      validUntil,
      unitsLeft,
      sentence: `Due after ${unitsLeft} more unit${unitsLeft === 1 ? '' : 's'} — ${measure}.`,
    };
  }
  const parts: string[] = [];
  if (validUntil) parts.push(`until ${clockTime(validUntil, f.timeZone)}`);
  if (unitsLeft !== null) parts.push(`for ${unitsLeft} more unit${unitsLeft === 1 ? '' : 's'}`);
  return {
    kind: 'qualified',
    locked: false,
    validUntil,
    unitsLeft,
    sentence: `Qualified ${parts.join(' or ') || 'with no time or unit limit'}.`,
  };
}
