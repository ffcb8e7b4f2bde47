import { describe as group, expect, it } from 'vitest';
import { capability, capabilityFromFigures, cpInterval, cpkInterval, readCapability } from './capability';

group('process capability', () => {
  it('gives Cp 1.00, Cpu 0.6667, Cpl 1.3333 and Cpk 0.6667 for USL 20, LSL 8, mean 16, s 2', () => {
    // NIST/SEMATECH e-Handbook of Statistical Methods, §6.1.6 "What is process capability?", worked example.
    const c = capabilityFromFigures(
      { n: 100, mean: 16, sigmaWithin: 2, sigmaOverall: 2 },
      { lsl: 8, usl: 20 },
    );
    expect(c.cp!.value).toBeCloseTo(1.0, 4);
    expect(c.cpu).toBeCloseTo(0.6667, 4);
    expect(c.cpl).toBeCloseTo(1.3333, 4);
    expect(c.cpk!.value).toBeCloseTo(0.6667, 4);
  });

  it('puts a 95 % interval of about [1.051, 1.609] around Cpk 1.33 from 50 units', () => {
    // Bissell, "How reliable is your capability index?", Applied Statistics 39 (1990) 331–340: the normal
    // approximation Ĉpk ± z·√(1/(9n) + Ĉpk²/(2(n−1))); the interval is the one quoted for Ĉpk 1.33, n 50.
    const i = cpkInterval(1.33, 50);
    expect(i.lower).toBeCloseTo(1.051, 3);
    expect(i.upper).toBeCloseTo(1.609, 3);
  });

  it('puts the chi-square interval around Cp', () => {
    // Ĉp·√(χ²/(n−1)) with the χ² table quantiles for 19 degrees of freedom, 8.907 (0.025) and 32.852 (0.975)
    // (any chi-square table, e.g. NIST/SEMATECH e-Handbook §1.3.6.7.4).
    const i = cpInterval(1.55, 20);
    expect(i.lower).toBeCloseTo(1.55 * Math.sqrt(8.907 / 19), 3);
    expect(i.upper).toBeCloseTo(1.55 * Math.sqrt(32.852 / 19), 3);
  });

  it('expects 1,350 ppm above the upper limit when the mean sits 3σ below it and there is no lower limit', () => {
    // Standard normal tail beyond 3σ: 0.00135 (any normal table).
    const c = capabilityFromFigures(
      { n: 50, mean: 0, sigmaWithin: 1, sigmaOverall: 1 },
      { lsl: null, usl: 3 },
    );
    expect(c.ppmWithin).toBeCloseTo(1349.9, 1);
    expect(c.cp).toBeNull();
    expect(c.cpk!.value).toBeCloseTo(1, 12);
  });

  it('takes σ within from the moving range for individuals and the overall σ for Pp', () => {
    // NIST §6.3.2.2 individuals data: MR̄ 1.8778 → σ within = MR̄ / d2(2), d2(2) = 2/√π exactly (the mean
    // range of two standard normal values, a textbook result).
    const x = [49.6, 47.6, 49.9, 51.3, 47.8, 51.2, 52.6, 52.4, 53.6, 52.1];
    const c = capability(x, { lsl: 40, usl: 60 })!;
    const d2 = 2 / Math.sqrt(Math.PI);
    expect(c.sigmaWithin).toBeCloseTo(1.8778 / d2, 4);
    expect(c.cp!.value).toBeCloseTo(20 / (6 * (1.8778 / d2)), 4);
    // Overall s of the ten values: numpy.std(x, ddof=1) = 2.0338523927649117 (NumPy, reference library).
    expect(c.sigmaOverall).toBeCloseTo(2.0338523927649117, 10);
  });

  it('reads 1.67 and above as capable, 1.33 up to 1.67 as conditionally capable, below as not capable', () => {
    // Acceptance bands for initial studies: common practice in the automotive supply chain, no single source.
    expect(readCapability(1.7)).toBe('capable');
    expect(readCapability(1.5)).toBe('conditionally-capable');
    expect(readCapability(1.32)).toBe('not-capable');
  });
});
