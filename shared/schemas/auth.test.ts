import { describe, expect, it } from 'vitest';
import { badgeCodeSchema, normaliseBadgeCode } from './auth';

describe('one badge code spelling', () => {
  it('a scanned code with its line ending and a typed lower-case code are the same badge', () => {
    expect(normaliseBadgeCode('op-1042\r\n')).toBe('OP-1042');
    expect(normaliseBadgeCode('  Op-1042 ')).toBe('OP-1042');
    expect(normaliseBadgeCode('OP-1042')).toBe('OP-1042');
  });

  it('a code the badge field accepts keeps its characters: only the case and the edges change', () => {
    const accepted = badgeCodeSchema.parse(' ab-12cd ');
    expect(normaliseBadgeCode(accepted)).toBe('AB-12CD');
    expect(normaliseBadgeCode(normaliseBadgeCode(accepted))).toBe('AB-12CD');
  });
});
