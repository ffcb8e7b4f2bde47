import type { HoldDisposition } from '#shared/schemas/quality';

export const DISPOSITION_LABELS: Record<HoldDisposition, string> = {
  use_as_is: 'Use as is',
  rework: 'Rework',
  recalibrate: 'Recalibrate',
  scrap: 'Scrap',
};

/** What each disposition does to the unit, in the words the release dialog shows. */
export const DISPOSITION_EFFECTS: Record<HoldDisposition, string> = {
  use_as_is:
    'Accept the unit with its passing calibration; it goes on as calibrated. Needs a passing calibration.',
  rework: 'Send it to repair; it comes back uncalibrated with a fresh set of attempts.',
  recalibrate: "Measure it again: the attempt count restarts under the active recipe's attempt budget.",
  scrap: 'Final: the unit can never be measured, released or shipped again.',
};

export const INVESTIGATION_STATUS_LABELS = {
  open: 'Open',
  contained: 'Contained',
  closed: 'Closed',
} as const;

/** "3 h", "2 d 4 h": how long a unit has been on hold. */
export function holdAge(hours: number): string {
  if (hours < 1) return 'under 1 h';
  if (hours < 48) return `${hours} h`;
  return `${Math.floor(hours / 24)} d ${hours % 24} h`;
}
