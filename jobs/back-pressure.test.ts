import { describe, expect, it } from 'vitest';
import { createBackPressure, type Backlog, type BackPressureOptions } from './back-pressure';

const OPTS: BackPressureOptions = { olderThanMs: 500, maxWaitMs: 5000, stallMs: 1500, sampleMs: 100 };

/** A backlog that follows a script of counts, one a sample, on a simulated clock (no real waiting). */
function scripted(counts: Backlog[], opts = OPTS) {
  let t = 0;
  let i = 0;
  const samples: Backlog[] = [];
  const pressure = createBackPressure(
    async () => {
      const n = counts[Math.min(i++, counts.length - 1)];
      samples.push(n);
      return n;
    },
    opts,
    () => t,
    async (ms) => {
      t += ms;
    },
  );
  return { pressure, samples, advance: (ms: number) => (t += ms) };
}
const b = (queued: number, old: number): Backlog => ({ queued, old });

describe('calibrations yield to travelers that wait too long', () => {
  it('run at once while no render has waited longer than its bound, however many are queued', async () => {
    const { pressure } = scripted([b(40, 0)]);
    expect(await pressure.wait()).toBe(0);
  });

  it('wait while some render has waited too long and the renderers work the backlog off', async () => {
    const { pressure, samples } = scripted([
      b(80, 30),
      b(80, 34),
      b(64, 34),
      b(48, 20),
      b(32, 4),
      b(16, 0),
      b(0, 0),
    ]);
    expect(await pressure.wait()).toBe(500);
    expect(samples).toEqual([b(80, 30), b(80, 34), b(64, 34), b(48, 20), b(32, 4), b(16, 0)]);
  });

  it('stop waiting when nobody works the backlog off, and do not wait for it again until it falls', async () => {
    const { pressure } = scripted([b(100, 100)]);
    expect(await pressure.wait()).toBe(1500);
    expect(await pressure.wait()).toBe(0);
  });

  it('wait again once a stalled backlog starts falling (a renderer got a core back)', async () => {
    const { pressure, advance } = scripted([
      ...Array<Backlog>(16).fill(b(100, 100)),
      b(84, 84),
      b(84, 84),
      b(20, 0),
    ]);
    expect(await pressure.wait()).toBe(1500);
    advance(100);
    expect(await pressure.wait()).toBe(200);
  });

  it('never hold a batch longer than the longest wait, however slowly the renders go', async () => {
    const slow = Array.from({ length: 200 }, (_, k) => b(1000 - k, 1000 - k));
    const { pressure } = scripted(slow);
    expect(await pressure.wait()).toBe(5000);
  });

  it('share one count among the fetch loops of a process', async () => {
    let counted = 0;
    const pressure = createBackPressure(
      async () => {
        counted++;
        return b(0, 0);
      },
      OPTS,
      () => 0,
    );
    await Promise.all([pressure.wait(), pressure.wait(), pressure.wait(), pressure.wait()]);
    expect(counted).toBe(1);
  });
});
