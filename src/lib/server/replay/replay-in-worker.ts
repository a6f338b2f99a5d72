// Main thread's side of a replay: starts the worker, posts it pages of frames as they are read,
// and waits for the result. At most `maxInFlight` pages are posted and not yet through the
// engine, so a long run is never in memory at once however fast the reads are.
import { Worker } from 'node:worker_threads';
import type { ReplayerOptions, ReplayIncident } from '../../detect/replay';
import { RulesRefused } from '../../detect/rules';
import type { RunInfo } from '../../detect/run-info';
import { REPLAY_WORKER_ROLE, type FramePage, type FromReplayWorker, type ReplayWorkerData, type ToReplayWorker } from './worker-protocol';

export interface ReplayJob {
	rules: unknown;
	run: RunInfo;
	options?: ReplayerOptions;
	/** When the run ended (server clock), for the engine's end-of-run signals. */
	endedAt_ms?: number;
}

export interface ReplayControl {
	/** Called with the number of frames through the engine so far. */
	onProgress?: (framesDone: number) => void;
	/** Aborting stops the reads and the worker; the promise rejects with ReplayCancelled. */
	signal?: AbortSignal;
	/** Pages posted and not yet acknowledged (default 2: one in the engine, one read ahead). */
	maxInFlight?: number;
}

export interface ReplayOutcome {
	frameCount: number;
	incidents: ReplayIncident[];
}

export class ReplayCancelled extends Error {
	constructor() {
		super('replay cancelled');
		this.name = 'ReplayCancelled';
	}
}

/** Starts a worker thread on the entry module: the built chunk, or the TypeScript source through tsx. */
async function startWorker(data: ReplayWorkerData): Promise<Worker> {
	const { replayWorkerUrl } = await import('./replay-worker');
	const url = new URL(replayWorkerUrl);
	if (!url.pathname.endsWith('.ts')) return new Worker(url, { workerData: data });
	// From source (tests, vite dev): the worker registers tsx's loader before loading the entry;
	// a worker does not take `--import` from execArgv.
	const load = `import('tsx/esm/api').then(({ register }) => { register(); return import(${JSON.stringify(url.href)}); })`;
	return new Worker(load, { eval: true, workerData: data });
}

export async function replayInWorker(pages: AsyncIterable<FramePage>, job: ReplayJob, control: ReplayControl = {}): Promise<ReplayOutcome> {
	const { signal, onProgress } = control;
	const maxInFlight = Math.max(1, control.maxInFlight ?? 2);
	if (signal?.aborted) throw new ReplayCancelled();
	const worker = await startWorker({ role: REPLAY_WORKER_ROLE, rules: job.rules, run: job.run, options: job.options ?? {} });

	let posted = 0;
	let acked = 0;
	let failure: Error | null = null;
	let wake: (() => void) | null = null;
	const nudge = () => {
		const w = wake;
		wake = null;
		w?.();
	};
	let settle!: { resolve: (o: ReplayOutcome) => void; reject: (e: Error) => void };
	const outcome = new Promise<ReplayOutcome>((resolve, reject) => (settle = { resolve, reject }));
	outcome.catch(() => {}); // observed below, or the failure is rethrown by the read loop
	const fail = (err: Error) => {
		failure ??= err;
		settle.reject(failure);
		nudge();
	};
	const onAbort = () => fail(new ReplayCancelled());
	signal?.addEventListener('abort', onAbort, { once: true });

	worker.on('message', (m: FromReplayWorker) => {
		if (m.type === 'pushed') {
			acked += 1;
			onProgress?.(m.frames);
			nudge();
		} else if (m.type === 'done') {
			settle.resolve({ frameCount: m.frameCount, incidents: m.incidents });
		} else if (m.type === 'error') {
			const err = m.rule
				? new RulesRefused(m.rule.path, m.rule.problem)
				: m.name === 'RangeError'
					? new RangeError(m.message)
					: new Error(`replay worker: ${m.message}`);
			fail(err);
		}
	});
	worker.on('error', (err) => fail(new Error(`replay worker failed: ${err.message}`)));
	worker.on('exit', (code) => fail(new Error(`replay worker stopped (exit code ${code})`)));

	const post = (m: ToReplayWorker) => worker.postMessage(m);
	try {
		for await (const page of pages) {
			if (failure) throw failure;
			post({ type: 'frames', ...page });
			posted += 1;
			while (posted - acked >= maxInFlight && !failure) await new Promise<void>((resolve) => (wake = resolve));
			if (failure) throw failure;
		}
		if (failure) throw failure;
		post({ type: 'finish', endedAt_ms: job.endedAt_ms });
		return await outcome;
	} finally {
		signal?.removeEventListener('abort', onAbort);
		worker.removeAllListeners();
		await worker.terminate();
	}
}
