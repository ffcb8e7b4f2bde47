import { describe, expect, it } from 'vitest';
import { runsOf } from './worker';

const job = (id: string, data: object) => ({ id, data });

describe('a fetched batch of jobs', () => {
  it('runs each job once when its queue does not coalesce', () => {
    const jobs = [job('a', { k: 1 }), job('b', { k: 1 }), job('c', { k: 2 })];
    expect(runsOf(jobs, false).map((r) => r.map((j) => j.id))).toEqual([['a'], ['b'], ['c']]);
  });

  it('makes one chart-watch run serve every job of the batch with the same station and model', () => {
    const p1 = { stationId: 's1', modelId: 'm1' };
    const p2 = { stationId: 's2', modelId: 'm1' };
    const jobs = [job('a', p1), job('b', p2), job('c', { ...p1 }), job('d', p2), job('e', p1)];
    expect(runsOf(jobs, true).map((r) => r.map((j) => j.id))).toEqual([
      ['a', 'c', 'e'],
      ['b', 'd'],
    ]);
  });
});
