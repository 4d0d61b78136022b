/** The part of each delay taken off at random, so endpoints that failed together are not retried together. */
export const RETRY_JITTER = 0.2;

/**
 * Delay before the next attempt after `failedAttempts` failures: exponential
 * backoff, base · 2^(failedAttempts − 1), capped at `maxMs`, less up to 20 %
 * jitter (`random` in [0, 1)). So the delay after the n-th failure lies in
 * [0.8 · d, d] with d = min(maxMs, base · 2^(n − 1)). Common practice.
 */
export function retryDelayMs(failedAttempts: number, baseMs: number, maxMs: number, random: number): number {
  const exponent = Math.min(Math.max(failedAttempts - 1, 0), 40);
  const delay = Math.min(maxMs, baseMs * 2 ** exponent);
  return Math.round(delay * (1 - RETRY_JITTER * Math.min(Math.max(random, 0), 1)));
}
