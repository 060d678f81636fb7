/**
 * Retry delays: capped exponential backoff with "equal jitter", the one
 * backoff of the project (serial reconnects in drivers/serial-transport.ts,
 * alert deliveries in src/alerts/delivery-queue.ts).
 *
 * Why jitter: several recorders (or one recorder and a udev rule) retrying a
 * port, or several stations posting to one receiver that comes back, retry in
 * lock-step and keep colliding; a random share of each delay spreads them.
 * Scheme as in M. Brooker, "Exponential Backoff And Jitter", AWS Architecture
 * Blog (2015), "equal jitter" variant: half the capped delay fixed, half
 * random. We also never go below `min_s`, so the first retry is not instant.
 */

/**
 * Delay in seconds before retry number `attempt` (0 = first retry).
 *
 * @param attempt retries already made (since the outage began, or for this item), integer ≥ 0
 * @param min_s   shortest delay, seconds (> 0)
 * @param max_s   cap on the delay, seconds (≥ min_s)
 * @param rand    uniform random number in [0, 1) (pass a seeded source in tests)
 * @returns a delay in [min_s, max_s]
 */
export function nextDelay(attempt: number, min_s: number, max_s: number, rand: number): number {
  if (!Number.isInteger(attempt) || attempt < 0) throw new TypeError(`attempt: must be an integer ≥ 0, got ${attempt}`);
  if (!(min_s > 0) || !Number.isFinite(min_s)) throw new TypeError(`min_s: must be a finite number > 0, got ${min_s}`);
  if (!(max_s >= min_s) || !Number.isFinite(max_s)) throw new TypeError(`max_s: must be finite and ≥ min_s (${min_s}), got ${max_s}`);
  if (!(rand >= 0 && rand < 1)) throw new TypeError(`rand: must be in [0, 1), got ${rand}`);
  // 2^attempt overflows to Infinity for large attempts; Math.min caps it first.
  const capped = Math.min(max_s, min_s * 2 ** Math.min(attempt, 1024));
  const d = capped / 2 + rand * (capped / 2);
  return Math.min(max_s, Math.max(min_s, d));
}
