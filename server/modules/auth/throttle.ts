/**
 * Counts failed sign-in attempts per client address in a sliding window. Kept in memory: one
 * server process guards itself; several processes behind a balancer each keep their own count,
 * which only makes the effective limit proportionally looser (the per-account lockout still holds).
 */
export class FailureThrottle {
  private readonly hits = new Map<string, number[]>();

  constructor(
    readonly maxFailures: number,
    readonly windowMs: number,
  ) {}

  private recent(key: string, nowMs: number): number[] {
    const list = (this.hits.get(key) ?? []).filter((t) => nowMs - t < this.windowMs);
    if (list.length === 0) this.hits.delete(key);
    else this.hits.set(key, list);
    return list;
  }

  isBlocked(key: string, now: Date): boolean {
    return this.recent(key, now.getTime()).length >= this.maxFailures;
  }

  /** Milliseconds until the oldest failure in the window expires. */
  retryAfterMs(key: string, now: Date): number {
    const list = this.recent(key, now.getTime());
    return list.length === 0 ? 0 : Math.max(0, this.windowMs - (now.getTime() - list[0]));
  }

  recordFailure(key: string, now: Date): void {
    const list = this.recent(key, now.getTime());
    list.push(now.getTime());
    this.hits.set(key, list);
  }
}
