// The Langevin estimators' shared plumbing: progress and cancellation, the drivers that run an
// estimator to completion or cooperatively, argument checks and the rate interval of a count.
import { poissonInterval } from '../stats/poisson';

export interface RateInterval {
	lower: number;
	upper: number;
}

/** Progress and cancellation for the long estimators; checked every CHECK_EVERY steps. */
export interface RunControl {
	/** Called with the completed fraction in [0, 1], at most about every 1 %. */
	onProgress?: (fraction: number) => void;
	signal?: AbortSignal;
	shouldStop?: () => boolean;
}

/** Thrown when a run is stopped through its signal or shouldStop. */
export class SimulationCancelled extends Error {
	constructor() {
		super('simulation cancelled');
		this.name = 'SimulationCancelled';
	}
}

export const CHECK_EVERY = 4096;

/**
 * The estimators are generators that yield their completed fraction every CHECK_EVERY steps
 * and return their result, so that one body serves both a blocking call (runToCompletion)
 * and a worker that must keep its event loop turning to hear a cancel (runCooperatively).
 */
export type Run<T> = Generator<number, T, void>;

function reporter(control: RunControl): (fraction: number) => void {
	let last = -1;
	return (fraction) => {
		if (control.signal?.aborted || control.shouldStop?.()) throw new SimulationCancelled();
		if (control.onProgress && fraction - last >= 0.01) {
			last = fraction;
			control.onProgress(Math.min(1, Math.max(0, fraction)));
		}
	};
}

/** Drives a run to its end on the calling thread. */
export function runToCompletion<T>(run: Run<T>, control: RunControl = {}): T {
	const report = reporter(control);
	for (;;) {
		const r = run.next();
		if (r.done) {
			control.onProgress?.(1);
			return r.value;
		}
		report(r.value);
	}
}

/**
 * Drives a run in slices of about sliceMs, returning to the event loop between slices so that
 * messages (a cancel) are delivered; shouldStop/signal are checked at every yield.
 */
export async function runCooperatively<T>(run: Run<T>, control: RunControl = {}, sliceMs = 50): Promise<T> {
	const report = reporter(control);
	let sliceStart = Date.now();
	for (;;) {
		const r = run.next();
		if (r.done) {
			control.onProgress?.(1);
			return r.value;
		}
		report(r.value);
		if (Date.now() - sliceStart >= sliceMs) {
			await new Promise<void>((resolve) => setTimeout(resolve, 0));
			if (control.signal?.aborted || control.shouldStop?.()) throw new SimulationCancelled();
			sliceStart = Date.now();
		}
	}
}

/** Re-yields a sub-run's fractions mapped into [offset, offset + width]. */
export function* scaled<T>(run: Run<T>, offset: number, width: number): Run<T> {
	for (;;) {
		const r = run.next();
		if (r.done) return r.value;
		yield offset + width * r.value;
	}
}

export function positive(name: string, v: unknown): number {
	if (typeof v !== 'number' || !Number.isFinite(v) || v <= 0) {
		throw new RangeError(`${name} must be a finite number > 0, got ${String(v)}`);
	}
	return v;
}

export function count(name: string, v: unknown): number {
	if (typeof v !== 'number' || !Number.isInteger(v) || v < 1) {
		throw new RangeError(`${name} must be a positive integer, got ${String(v)}`);
	}
	return v;
}

export function rateInterval(n: number, exposure: number, confidence: number): RateInterval {
	const { lower, upper } = poissonInterval(n, confidence);
	return { lower: lower / exposure, upper: upper / exposure };
}
