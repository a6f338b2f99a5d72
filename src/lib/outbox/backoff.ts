// When to try a failed delivery again: exponential backoff with jitter, so that after an outage
// the queued messages do not all hit the recovered server in the same second.

export interface BackoffPolicy {
	/** Wait after the first failure. */
	base_ms: number;
	/** No wait grows beyond this. */
	cap_ms: number;
}

export const DEFAULT_BACKOFF: BackoffPolicy = { base_ms: 5_000, cap_ms: 10 * 60_000 };

/**
 * The wait before the next try after `attempts` failed tries (1 = the first failed).
 * "Equal jitter": half the exponential step is kept, the other half drawn at random, so the wait
 * still grows with each failure but two rows that failed together drift apart.
 */
export function retryDelay_ms(attempts: number, policy: BackoffPolicy = DEFAULT_BACKOFF, random: () => number = Math.random): number {
	if (!Number.isInteger(attempts) || attempts < 1)
		throw new RangeError(`retryDelay_ms: attempts must be a whole number ≥ 1, got ${attempts}`);
	const step = Math.min(policy.cap_ms, policy.base_ms * 2 ** Math.min(attempts - 1, 30));
	return Math.round(step / 2 + random() * (step / 2));
}
