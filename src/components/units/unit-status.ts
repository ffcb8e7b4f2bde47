import type { UnitStatus } from '#shared/schemas/units';
import type { Tone } from '../ui/status-chip';

/** A unit's status in words and tone, the same on every screen. */
export const UNIT_STATUS_LABELS: Record<UnitStatus, string> = {
  new: 'Not calibrated yet',
  calibrated: 'Calibrated',
  failed: 'Failed, retest allowed',
  on_hold: 'On hold',
  scrapped: 'Scrapped (final)',
};

export const UNIT_STATUS_TONES: Record<UnitStatus, Tone> = {
  new: 'neutral',
  calibrated: 'ok',
  failed: 'fault',
  on_hold: 'warn',
  scrapped: 'fault',
};
