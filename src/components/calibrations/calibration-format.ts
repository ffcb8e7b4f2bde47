/** How calibrations read on screen: verdicts, counts, failed checks, programming. Offsets: shared/wording. */
import type { CalibrationView } from '#shared/schemas/calibrations';
import { checkName } from '#shared/calibration/check-guide';
import type { Tone } from '../ui/status-chip';

export type Verdict = CalibrationView['verdict'];

export const VERDICT_LABELS: Record<Verdict, string> = {
  pass: 'Pass',
  fail: 'Fail',
  unusable: 'No result',
};

/** Firmware counts as the unit stores them, with thousands grouped: "766 counts". */
export function formatCounts(counts: number | null | undefined): string {
  if (counts === null || counts === undefined) return '—';
  return `${counts.toLocaleString('en-GB')} counts`;
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
