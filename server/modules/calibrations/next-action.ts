import type { Check } from '#shared/schemas/calibration-result';
import { failureStep } from '#shared/calibration/check-guide';

/**
 * Operator wording for what to do next with the unit after this calibration. The failed checks pick
 * the step from the one table in shared/calibration/check-guide.ts: a retest only where a retest can
 * help, repair at once where it cannot. A fail that used the recipe's last attempt is the retest
 * policy's hold; `unitHoldReason` is any hold the unit is under now.
 */
export function nextActionFor(
  verdict: 'pass' | 'fail' | 'unusable',
  attempt: number | null,
  maxAttempts: number,
  unitHoldReason: string | null,
  checks: readonly Check[] = [],
): string {
  if (verdict === 'unusable')
    return 'The station data could not be used (not a unit failure): run the measurement again.';
  if (verdict === 'pass') {
    if (unitHoldReason)
      return `The unit is on hold (${unitHoldReason}): do not program or ship it. Tag it and put it in the hold area for quality.`;
    return 'Program the offset, let the station confirm it, print the traveler and send the unit on.';
  }
  const step = failureStep(checks);
  if (step?.remedy === 'repair') return `${step.action} The unit is on hold until quality releases it.`;
  if ((attempt ?? 0) >= maxAttempts) {
    return `No attempts left (${attempt} of ${maxAttempts}): the unit is on hold. Tag it and put it in the hold area for quality.`;
  }
  if (unitHoldReason)
    return `The unit is on hold (${unitHoldReason}): tag it and put it in the hold area for quality.`;
  const retest = `attempt ${(attempt ?? 0) + 1} of ${maxAttempts}`;
  if (step?.remedy === 'station') return `${step.action} (${retest})`;
  return `Retest (${retest}): ${step?.action ?? 'reseat the unit and check the coupling, then spin it again.'}`;
}
