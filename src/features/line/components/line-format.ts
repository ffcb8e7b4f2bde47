import type { CalibrationView, UnitStatus } from '../../../../shared/schemas/line';
import { checkName } from '../../../../shared/calibration/check-guide';
import type { Tone } from '../../../components/ui/status-chip';

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

export type Verdict = CalibrationView['verdict'];

export const VERDICT_LABELS: Record<Verdict, string> = {
  pass: 'Pass',
  fail: 'Fail',
  unusable: 'No result',
};

// The offset is printed on the traveler too: one format for screen and paper.
export { formatOffsetDeg } from '../../../../shared/wording';

/** Firmware counts as the unit stores them, with thousands grouped: "766 counts". */
export function formatCounts(counts: number | null | undefined): string {
  if (counts === null || counts === undefined) return '—';
  return `${counts.toLocaleString('en-GB')} counts`;
}

export function formatDeg(deg: number | null | undefined, digits = 2): string {
  if (deg === null || deg === undefined) return '—';
  const sign = deg > 0 ? '+' : deg < 0 ? '−' : '±';
  return `${sign}${Math.abs(deg).toFixed(digits)}°`;
}

export type FailedCheckLine = { key: string; name: string; message: string };

/** The checks that failed: the check's plain name and the engine's own sentence. */
export function failedChecks(calibration: CalibrationView): FailedCheckLine[] {
  const checks = calibration.result?.checks ?? [];
  const failed: FailedCheckLine[] = checks
    .filter((c) => !c.passed)
    .map((c) => ({ key: c.code, name: checkName(c.code), message: c.message }));
  if (failed.length === 0 && calibration.error)
    failed.push({ key: 'error', name: 'Measurement not usable', message: calibration.error.message });
  return failed;
}

export const PROGRAMMING_LABELS: Record<CalibrationView['programming']['status'], string> = {
  pending: 'Waiting for the station to confirm programming',
  confirmed: 'Programmed and read back',
  mismatch: 'Programming mismatch: read-back differs',
};

export const PROGRAMMING_TONES: Record<CalibrationView['programming']['status'], Tone> = {
  pending: 'neutral',
  confirmed: 'ok',
  mismatch: 'fault',
};
