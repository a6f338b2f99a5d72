// Reconnect delays for the agent: exponential growth with jitter, so that many agents cut off by
// the same server restart do not all knock again in the same instant.

export interface BackoffOptions {
	/** First delay, before any jitter. */
	initialMs?: number;
	/** Ceiling for the un-jittered delay. */
	maxMs?: number;
	factor?: number;
	/** Fraction of the delay that is random: the delay lies in [base·(1−jitter), base]. */
	jitter?: number;
	/** Uniform [0, 1) source; injectable so tests are deterministic. */
	random?: () => number;
}

export interface Backoff {
	/** The delay to wait before the next attempt; each call grows the base delay. */
	next(): number;
	/** Back to the first delay, after a connection that got as far as `welcome`. */
	reset(): void;
	readonly attempt: number;
}

export function createBackoff(options: BackoffOptions = {}): Backoff {
	const initialMs = options.initialMs ?? 500;
	const maxMs = options.maxMs ?? 30_000;
	const factor = options.factor ?? 2;
	const jitter = options.jitter ?? 0.5;
	const random = options.random ?? Math.random;
	if (!(initialMs > 0) || !(maxMs >= initialMs)) throw new RangeError('backoff: need 0 < initialMs ≤ maxMs');
	if (!(factor >= 1)) throw new RangeError('backoff: factor must be ≥ 1');
	if (!(jitter >= 0 && jitter <= 1)) throw new RangeError('backoff: jitter must lie in [0, 1]');
	let attempt = 0;
	return {
		next() {
			const base = Math.min(maxMs, initialMs * factor ** attempt);
			attempt += 1;
			return base * (1 - jitter * random());
		},
		reset() {
			attempt = 0;
		},
		get attempt() {
			return attempt;
		}
	};
}
