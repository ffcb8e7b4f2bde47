import { expect } from 'vitest';

/**
 * Holds two results of the same figures equal: every number to 1e-9 relative (two paths add the same sums in
 * another order), everything else exactly, walking objects and arrays; `path` names the field that differs.
 */
export function closeDeep(actual: unknown, expected: unknown, path = ''): void {
  if (typeof expected === 'number') {
    expect(typeof actual, path).toBe('number');
    expect(Math.abs((actual as number) - expected), path).toBeLessThanOrEqual(
      1e-9 * Math.max(1, Math.abs(expected)),
    );
    return;
  }
  if (expected === null || typeof expected !== 'object') {
    expect(actual, path).toEqual(expected);
    return;
  }
  if (Array.isArray(expected)) {
    expect((actual as unknown[]).length, path).toBe(expected.length);
    expected.forEach((e, i) => closeDeep((actual as unknown[])[i], e, `${path}[${i}]`));
    return;
  }
  for (const [k, v] of Object.entries(expected))
    closeDeep((actual as Record<string, unknown>)[k], v, `${path}.${k}`);
}
