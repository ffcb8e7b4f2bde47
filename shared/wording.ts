/**
 * Domain wording that screens and printed documents share, so the station screen and the traveler
 * always say the same thing the same way.
 */

/**
 * The cautions for a back-driven motor (a turning rotor puts its back-EMF on the terminals). Screens and
 * travelers that guide operators show all of them; they defer to the plant's rules and local codes.
 */
export const SAFETY_CAUTIONS = [
  'Close the guards and prove the interlocks work before the rotor is spun.',
  'While the rotor turns, the motor terminals carry its back-EMF: treat them as live.',
  'Do not touch the terminals, leads or connector while the rotor is spinning or coasting down.',
  "Follow the plant's safety rules, local electrical codes and machinery-safety standards such as IEC 60204-1.",
] as const;

export const SAFETY_TITLE = 'Safety: back-driven motor';

const MINUS = '\u2212';

/**
 * An offset in electrical degrees as people read it: explicit sign (a true minus), two decimals and the
 * unit "°e" (electrical degrees): "+4.21 °e", "−4.21 °e", "±0.00 °e". A value that rounds to zero prints
 * as ±0.00 so a tiny negative never reads "−0.00".
 */
export function formatOffsetDeg(deg: number | null | undefined): string {
  if (deg === null || deg === undefined || !Number.isFinite(deg)) return '—';
  const text = Math.abs(deg).toFixed(2);
  const sign = Number(text) === 0 ? '±' : deg > 0 ? '+' : MINUS;
  return `${sign}${text} °e`;
}

/**
 * A signed difference in degrees (a reading against its certified value, a bias): explicit sign, the
 * decimals asked for, and the same rule for zero, so a tiny negative never reads "−0.000°".
 */
export function formatSignedDeg(deg: number, decimals = 2): string {
  const text = Math.abs(deg).toFixed(decimals);
  const sign = Number(text) === 0 ? '±' : deg > 0 ? '+' : MINUS;
  return `${sign}${text}°`;
}
