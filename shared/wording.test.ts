import { describe, expect, it } from 'vitest';
import { formatOffsetDeg, formatSignedDeg } from './wording';

describe('how signed angles read', () => {
  it('an offset carries its sign, a true minus, two decimals and °e', () => {
    expect(formatOffsetDeg(4.214)).toBe('+4.21 °e');
    expect(formatOffsetDeg(-4.216)).toBe('\u22124.22 °e');
    expect(formatOffsetDeg(null)).toBe('—');
  });

  it('a value that rounds to zero reads ± rather than a negative zero', () => {
    expect(formatOffsetDeg(-0.004)).toBe('±0.00 °e');
    expect(formatSignedDeg(-0.0004, 3)).toBe('±0.000°');
    expect(formatSignedDeg(0.0004)).toBe('±0.00°');
  });

  it('a reading against its certified value shows the decimals asked for', () => {
    expect(formatSignedDeg(0.0123, 3)).toBe('+0.012°');
    expect(formatSignedDeg(-0.25)).toBe('\u22120.25°');
  });
});
