/**
 * Back-pressure of one queue on another: a producer's batch (calibrations, whose commits queue renders)
 * waits while jobs of the other queue (travelers) have waited too long to be fetched, so the line's
 * throughput includes the work it queues instead of running ahead of it. The signal is the jobs' age, not
 * their number: the renders are fetched newest first, so a standing backlog of any size leaves its oldest
 * jobs waiting behind every newer one, and only an age bound keeps each traveler's lag bounded. The wait is
 * bounded and gives up as soon as the backlog stops falling: a consumer that is not running (or gets no CPU
 * at all) must not stop the producer.
 */
export interface BackPressureOptions {
  /** A batch waits while some job has waited longer than this to be fetched. */
  olderThanMs: number;
  /** The longest one batch waits (well below its jobs' expiry). */
  maxWaitMs: number;
  /** Stop waiting when the backlog has not fallen for this long (nobody is working it off). */
  stallMs: number;
  /** How often the backlog is counted while waiting; a count younger than this is shared. */
  sampleMs: number;
}

/** The other queue's jobs waiting to be fetched: all of them, and those older than `olderThanMs`. */
export interface Backlog {
  queued: number;
  old: number;
}

export const RENDER_BACK_PRESSURE: BackPressureOptions = {
  // With a render batch's own time and the renderer's gathering, a traveler is stored about a second after
  // its calibration while the line is saturated.
  olderThanMs: 500,
  maxWaitMs: 5000,
  stallMs: 1500,
  sampleMs: 100,
};

export function createBackPressure(
  countBacklog: () => Promise<Backlog>,
  opts: BackPressureOptions,
  now: () => number = () => performance.now(),
  sleep: (ms: number) => Promise<void> = (ms) => new Promise((r) => setTimeout(r, ms)),
) {
  let last: { at: number; count: Promise<Backlog> } | undefined;
  // The backlog when a wait last gave up: no batch waits again until it has fallen below that.
  let stalledAt: number | undefined;
  // One count at a time, shared by every fetch loop of the process.
  const backlog = () => {
    const t = now();
    if (!last || t - last.at >= opts.sampleMs) {
      const count = countBacklog().catch(() => ({ queued: 0, old: 0 }));
      last = { at: t, count };
    }
    return last.count;
  };
  return {
    /** Resolves when the batch may run; answers how long it waited (ms). */
    async wait(): Promise<number> {
      const t0 = now();
      let count = await backlog();
      if (count.old === 0) {
        stalledAt = undefined;
        return 0;
      }
      if (stalledAt !== undefined) {
        if (count.queued >= stalledAt) return 0;
        stalledAt = undefined;
      }
      let lowest = count.queued;
      let fellAt = t0;
      while (now() - t0 < opts.maxWaitMs) {
        await sleep(opts.sampleMs);
        count = await backlog();
        if (count.old === 0) break;
        if (count.queued < lowest) {
          lowest = count.queued;
          fellAt = now();
        } else if (now() - fellAt >= opts.stallMs) {
          stalledAt = count.queued;
          break;
        }
      }
      return now() - t0;
    },
  };
}
