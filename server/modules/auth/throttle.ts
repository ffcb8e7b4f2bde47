/**
 * Counts sign-in attempts per key (a client address, or a trusted device) in a sliding window. Kept in
 * memory: one server process guards itself; several processes behind a balancer each keep their own
 * count, which only makes the effective limit proportionally looser (the per-account lockout still holds).
 *
 * An attempt is counted when it starts (`reserve`), before its secret is checked, and checking and
 * recording happen in one synchronous step: N parallel attempts cannot all see "not blocked yet".
 * A successful attempt is taken back (`forgive`), so only failures stay counted.
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

  /** Counts one attempt now; false (and nothing counted) when the key is already at its limit. */
  reserve(key: string, now: Date): boolean {
    const list = this.recent(key, now.getTime());
    if (list.length >= this.maxFailures) return false;
    list.push(now.getTime());
    this.hits.set(key, list);
    return true;
  }

  /** Takes back an attempt counted by `reserve` at `now` (it succeeded). */
  forgive(key: string, now: Date): void {
    const list = this.hits.get(key);
    const at = list?.lastIndexOf(now.getTime()) ?? -1;
    if (list && at >= 0) list.splice(at, 1);
  }

  recordFailure(key: string, now: Date): void {
    const list = this.recent(key, now.getTime());
    list.push(now.getTime());
    this.hits.set(key, list);
  }
}
