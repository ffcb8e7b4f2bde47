/**
 * A limit line keeping only its corners: the first and last values and each value beside a change, null
 * between (drawn with spanGaps, so the line is the same). Limits are constant over most charts, and a dashed
 * 10,000-point path is far slower to stroke than a dashed two-point one.
 */
export function sparseLine(values: number[]): (number | null)[] {
  const n = values.length;
  const out: (number | null)[] = new Array<number | null>(n).fill(null);
  for (let i = 0; i < n; i++) {
    const v = values[i];
    if (i === 0 || i === n - 1 || v !== values[i - 1] || v !== values[i + 1]) out[i] = v;
  }
  return out;
}
