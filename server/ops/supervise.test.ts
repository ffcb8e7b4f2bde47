import { describe, expect, it } from 'vitest';
import { restartDelayMs, superviseService } from './supervise.mjs';

describe('supervised processes', () => {
  it('wait longer before each restart of a process that keeps dying: 0.5 s doubling up to 30 s', () => {
    expect([1, 2, 3, 4, 5, 6, 7, 8, 20].map(restartDelayMs)).toEqual([
      500, 1000, 2000, 4000, 8000, 16_000, 30_000, 30_000, 30_000,
    ]);
  });

  it('a process that exits is started again, logged each time, and stays stopped once stopped', async () => {
    const lines: string[] = [];
    // A process that lives 100 ms and exits with code 3.
    const s = superviseService('flaky', process.execPath, ['-e', 'setTimeout(() => process.exit(3), 100)'], {
      log: (m) => lines.push(m),
    });
    await s.firstStart;
    const deadline = Date.now() + 10_000;
    while (s.restarts.length < 2 && Date.now() < deadline) await new Promise((r) => setTimeout(r, 50));
    await s.stop();
    expect(s.restarts.length).toBeGreaterThanOrEqual(2);
    expect(s.restarts[0]).toMatchObject({ code: 3, signal: null });
    // The second pause is twice the first.
    const exits = lines.filter((l) => l.includes(' exited ('));
    expect(exits[0]).toMatch(/flaky exited \(code 3\); restarting in 0\.5 s \(restart 1\)/);
    expect(exits[1]).toMatch(/flaky exited \(code 3\); restarting in 1\.0 s \(restart 2\)/);
    expect(lines).toContainEqual(expect.stringMatching(/flaky is running again/));
    const after = s.restarts.length;
    await new Promise((r) => setTimeout(r, 1500));
    expect(s.restarts.length).toBe(after);
    expect(s.current().child.exitCode ?? s.current().child.signalCode).not.toBeNull();
  });
});
