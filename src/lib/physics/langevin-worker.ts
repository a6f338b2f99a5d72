// Langevin jobs off the main thread: the message protocol, its handler, and the Web Worker wiring
// that runs when this module is loaded with new Worker(new URL('./langevin-worker.ts',
// import.meta.url), { type: 'module' }). langevin-node-worker.ts wires the same handler to
// worker_threads.
//
// In:  { kind: 'escape' | 'switching' | 'sweep', params, options }   (optionally type: 'run')
//      { type: 'cancel' }
// Out: { type: 'progress', fraction }  then  { type: 'result', kind, result }
//      or { type: 'error', message, cancelled }  (cancelled: true after a cancel)
import type { ModelParams } from './model';
import {
	escapeRateRun,
	runCooperatively,
	SimulationCancelled,
	sweepRun,
	switchingRateRun,
	type EscapeOptions,
	type EscapeResult,
	type RunControl,
	type SweepOptions,
	type SweepResult,
	type SwitchingOptions,
	type SwitchingResult
} from './langevin';

type Plain<T> = Omit<T, keyof RunControl>;

/** Options as sent in a message: the estimator's options without callbacks or signal. */
export type EscapeJobOptions = Plain<EscapeOptions>;
export type SwitchingJobOptions = Plain<SwitchingOptions>;
export type SweepJobOptions = SweepOptions extends infer U ? (U extends unknown ? Plain<U> : never) : never;

export type LangevinJob =
	| { type?: 'run'; kind: 'escape'; params: ModelParams; options: EscapeJobOptions }
	| { type?: 'run'; kind: 'switching'; params: ModelParams; options: SwitchingJobOptions }
	| { type?: 'run'; kind: 'sweep'; params: ModelParams; options: SweepJobOptions };

export type LangevinJobResult = EscapeResult | SwitchingResult | SweepResult;

export type WorkerInbound = LangevinJob | { type: 'cancel' };

export type WorkerOutbound =
	| { type: 'progress'; fraction: number }
	| { type: 'result'; kind: LangevinJob['kind']; result: LangevinJobResult }
	| { type: 'error'; message: string; cancelled: boolean };

/** Checks a job message's shape; throws a RangeError naming what is wrong. */
export function parseJob(message: unknown): LangevinJob {
	if (message === null || typeof message !== 'object') throw new RangeError('job message must be an object');
	const m = message as Record<string, unknown>;
	if (m.kind !== 'escape' && m.kind !== 'switching' && m.kind !== 'sweep') {
		throw new RangeError(`job kind must be 'escape', 'switching' or 'sweep', got ${String(m.kind)}`);
	}
	if (m.params === null || typeof m.params !== 'object') throw new RangeError('job params must be an object');
	if (m.options === null || typeof m.options !== 'object') throw new RangeError('job options must be an object');
	return m as unknown as LangevinJob;
}

/** Runs one job cooperatively (so cancels are heard), with control from the caller. */
export function runJob(job: LangevinJob, control: RunControl): Promise<LangevinJobResult> {
	switch (job.kind) {
		case 'escape':
			return runCooperatively(escapeRateRun(job.params, job.options), control);
		case 'switching':
			return runCooperatively(switchingRateRun(job.params, job.options), control);
		case 'sweep':
			return runCooperatively(sweepRun(job.params, job.options as SweepOptions), control);
	}
}

/**
 * The message handler shared by the browser and Node adapters: one job at a time; a job that
 * arrives while another runs is refused with an error message.
 */
export function createJobHandler(post: (message: WorkerOutbound) => void): (message: unknown) => void {
	let running = false;
	let cancelRequested = false;
	return (message) => {
		if (message !== null && typeof message === 'object' && (message as { type?: unknown }).type === 'cancel') {
			if (running) cancelRequested = true;
			return;
		}
		let job: LangevinJob;
		try {
			job = parseJob(message);
		} catch (e) {
			post({ type: 'error', message: (e as Error).message, cancelled: false });
			return;
		}
		if (running) {
			post({ type: 'error', message: 'a job is already running in this worker', cancelled: false });
			return;
		}
		running = true;
		cancelRequested = false;
		runJob(job, {
			shouldStop: () => cancelRequested,
			onProgress: (fraction) => post({ type: 'progress', fraction })
		})
			.then((result) => post({ type: 'result', kind: job.kind, result }))
			.catch((e: unknown) => {
				const cancelled = e instanceof SimulationCancelled;
				post({ type: 'error', message: e instanceof Error ? e.message : String(e), cancelled });
			})
			.finally(() => {
				running = false;
			});
	};
}

// Web Worker wiring: only inside a dedicated worker global scope (not on the main thread, not in
// Node, where langevin-node-worker.ts does the wiring).
const workerScopeClass = (globalThis as { WorkerGlobalScope?: abstract new () => unknown }).WorkerGlobalScope;
if (workerScopeClass !== undefined && globalThis instanceof workerScopeClass) {
	const scope = globalThis as unknown as {
		postMessage(message: unknown): void;
		addEventListener(type: 'message', listener: (event: { data: unknown }) => void): void;
	};
	const handle = createJobHandler((message) => scope.postMessage(message));
	scope.addEventListener('message', (event) => handle(event.data));
}
