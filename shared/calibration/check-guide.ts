import type { Check, CheckCode } from '../schemas/calibration-result';

/**
 * How people read each check: its plain name, which way its limit points, and what to do with a unit
 * that failed it. One table for the station screen, the unit pages and the printed traveler, so the
 * screen and the paper can never disagree about a limit's direction or the next step.
 *
 * Remedies (common practice at an end-of-line station, no source):
 * - `retest`: the cause can be in how the unit was measured (seating, coupling, speed, capture length,
 *   detector noise), so another spin can pass.
 * - `station`: the station itself is wrong (its drive wiring); fix the station first, then retest.
 * - `repair`: the cause is built into the unit (a dead or misplaced sensor, swapped phases, a magnet ring
 *   far off): another spin gives the same answer, so the unit goes to repair and quality at once.
 */

export type LimitDirection = 'min' | 'max' | 'window' | 'equals';
export type Remedy = 'retest' | 'station' | 'repair';

export interface CheckGuide {
  /** What the check is about, in words for people. */
  name: string;
  /** `min`: the value must reach the limit (≥); `max`: stay at or under it (≤); `window`: [min, max]. */
  direction: LimitDirection;
  remedy: Remedy;
  /** The next step for a unit that failed this check, in plain words. */
  action: string;
}

export const CHECK_GUIDE: Record<CheckCode, CheckGuide> = {
  'offset.within_limits': {
    name: 'Hall offset within limits',
    direction: 'window',
    remedy: 'retest',
    action: 'Reseat the unit and check the coupling, then spin it again.',
  },
  'edges.residual_spread': {
    name: 'Hall edges agree with each other',
    direction: 'max',
    remedy: 'retest',
    action: 'Reseat the unit and check the coupling, then spin it again.',
  },
  'bemf.phase_sequence': {
    name: 'Phase order A-B-C',
    direction: 'equals',
    remedy: 'repair',
    action:
      'Do not retest: phases B and C are swapped in the winding or its connector. Tag the unit and send it to repair.',
  },
  'hall.all_switching': {
    name: 'Every hall sensor switches',
    direction: 'min',
    remedy: 'repair',
    action:
      'Do not retest: a hall sensor is dead or disconnected. Tag the unit and send it to repair (hall board).',
  },
  'hall.valid_states': {
    name: 'Only valid hall states',
    direction: 'equals',
    remedy: 'repair',
    action:
      'Do not retest: the hall sensors show states this layout never makes (wiring or wrong board). Tag the unit and send it to repair.',
  },
  'direction.as_declared': {
    name: 'Turned the declared way',
    direction: 'equals',
    remedy: 'station',
    action:
      "The station's drive turned the rotor the wrong way: call the line technician, then retest once the station is fixed.",
  },
  'speed.within_window': {
    name: 'Speed within the window',
    direction: 'window',
    remedy: 'retest',
    action: 'Check the drive speed setting and the coupling, then spin it again.',
  },
  'turns.enough': {
    name: 'Enough electrical turns',
    direction: 'min',
    remedy: 'retest',
    action: 'Spin it again and let the station capture for longer.',
  },
  'fit.residual': {
    name: 'Back-EMF follows the rotor angle',
    direction: 'max',
    remedy: 'retest',
    action: 'Check the probe leads and the coupling, then spin it again.',
  },
  'speed.variation': {
    name: 'Speed steady while measuring',
    direction: 'max',
    remedy: 'retest',
    action: 'Check the coupling and the drive, then spin it again.',
  },
  'capture.ke_within_limits': {
    name: 'Back-EMF constant within limits',
    direction: 'window',
    remedy: 'repair',
    action:
      'Do not retest: the motor makes the wrong voltage for its speed (winding or magnets). Tag the unit and send it to repair.',
  },
};

/**
 * An offset further outside its window than this share of the window's width is built into the unit
 * (board position, magnet ring), not a measuring slip. Common practice, no source.
 */
export const FAR_OUTSIDE_SHARE = 0.25;
/** Hall edges further apart than this multiple of their limit mean a misplaced sensor. Common practice. */
export const FAR_RESIDUAL_FACTOR = 2;

export function checkGuide(code: string): CheckGuide | undefined {
  return (CHECK_GUIDE as Record<string, CheckGuide>)[code];
}

/** The plain name of a check; an unknown code (a newer engine) is shown as it is. */
export function checkName(code: string): string {
  return checkGuide(code)?.name ?? code;
}

/** What a failed check calls for; some checks need more than a retest only when far out. */
export function remedyOf(check: Pick<Check, 'code' | 'passed' | 'value' | 'limit'>): Remedy | null {
  if (check.passed) return null;
  const guide = checkGuide(check.code);
  if (!guide) return 'retest';
  if (check.code === 'offset.within_limits') {
    if (typeof check.value !== 'number' || !Array.isArray(check.limit)) return 'repair';
    const [lo, hi] = check.limit;
    const excess = check.value < lo ? lo - check.value : check.value - hi;
    return excess > FAR_OUTSIDE_SHARE * (hi - lo) ? 'repair' : 'retest';
  }
  if (check.code === 'edges.residual_spread') {
    if (typeof check.value !== 'number' || typeof check.limit !== 'number') return 'repair';
    return check.value > FAR_RESIDUAL_FACTOR * check.limit ? 'repair' : 'retest';
  }
  return guide.remedy;
}

const REMEDY_RANK: Record<Remedy, number> = { retest: 0, station: 1, repair: 2 };

const FAR_ACTION: Partial<Record<CheckCode, string>> = {
  'offset.within_limits':
    'Do not retest: the offset is far outside its limits (sensor board position or magnet ring). Tag the unit and send it to repair.',
  'edges.residual_spread':
    'Do not retest: one hall sensor is far out of place or the magnet is uneven. Tag the unit and send it to repair.',
};

export interface FailureStep {
  remedy: Remedy;
  /** The check that decides the step (the one needing the most). */
  check: Check;
  action: string;
}

/** The step the failed checks call for: repair beats fixing the station, which beats a retest. */
export function failureStep(checks: readonly Check[]): FailureStep | null {
  let best: FailureStep | null = null;
  for (const check of checks) {
    const remedy = remedyOf(check);
    if (remedy === null) continue;
    if (best && REMEDY_RANK[remedy] <= REMEDY_RANK[best.remedy]) continue;
    const guide = checkGuide(check.code);
    const action =
      remedy === 'repair' && guide?.remedy !== 'repair'
        ? (FAR_ACTION[check.code as CheckCode] ?? 'Do not retest: tag the unit and send it to repair.')
        : (guide?.action ?? 'Spin it again.');
    best = { remedy, check, action };
  }
  return best;
}

/** Why a unit that failed beyond what a retest can mend goes on hold at once (stored as its hold reason). */
export function repairHoldReason(step: FailureStep): string {
  return `Sent to repair, a retest cannot help. ${step.check.message}`.slice(0, 240);
}

// ---- Limits and values, as printed -------------------------------------------------------------------

const MINUS = '\u2212';

/** Up to 2 decimals, trailing zeros dropped, a true minus sign: 1480, 0.93, −17.85. */
export function plainNumber(value: number): string {
  const text = String(Number(value.toFixed(2)));
  return text.startsWith('-') ? `${MINUS}${text.slice(1)}` : text;
}

/** The unit of a check's value for people: "deg" is printed as °. */
export function unitText(unit: string | undefined): string {
  if (!unit) return '';
  if (unit === 'deg') return '°';
  return ` ${unit}`;
}

/** A check's limit with its true direction: "≥ 50 %", "≤ 10°", "−15 to 15°", "A-B-C". */
export function formatCheckLimit(check: { code: string; limit: Check['limit']; unit?: string }): string {
  const u = unitText(check.unit);
  const { limit } = check;
  if (limit === null) return '—';
  if (Array.isArray(limit)) return `${plainNumber(limit[0])} to ${plainNumber(limit[1])}${u}`;
  if (typeof limit === 'string') return limit.replaceAll(',', ', ');
  const direction = checkGuide(check.code)?.direction ?? 'max';
  return `${direction === 'min' ? '≥' : '≤'} ${plainNumber(limit)}${u}`;
}

/** A check's measured value with its unit. */
export function formatCheckValue(check: Pick<Check, 'value'> & { unit?: string }): string {
  if (check.value === null) return '—';
  if (typeof check.value === 'string') return check.value.replaceAll(',', ', ');
  return `${plainNumber(check.value)}${unitText(check.unit)}`;
}
