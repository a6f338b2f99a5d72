// Caller's side of the Langevin worker protocol (langevin-worker.ts): send a job to a worker,
// follow its progress, cancel it, and get the result as a promise. Works with a browser Worker
// and with a Node worker_threads Worker alike.
import type { LangevinJob, LangevinJobResult, WorkerOutbound } from './langevin-worker';

/** What runInWorker needs of a worker: a browser Worker or a Node worker_threads Worker. */
export type WorkerLike =
	| {
			postMessage(message: unknown): void;
			addEventListener(type: 'message', listener: (event: { data: unknown }) => void): void;
			removeEventListener(type: 'message', listener: (event: { data: unknown }) => void): void;
			addEventListener(type: 'error', listener: (event: { message?: string }) => void): void;
			removeEventListener(type: 'error', listener: (event: { message?: string }) => void): void;
	  }
	| {
			postMessage(message: unknown): void;
			on(type: 'message', listener: (data: unknown) => void): unknown;
			on(type: 'error', listener: (error: Error) => void): unknown;
			off(type: 'message', listener: (data: unknown) => void): unknown;
			off(type: 'error', listener: (error: Error) => void): unknown;
	  };

export interface RunInWorkerOptions {
	onProgress?: (fraction: number) => void;
	/** Aborting sends { type: 'cancel' }; the promise then rejects with WorkerJobCancelled. */
	signal?: AbortSignal;
}

/** Rejection reason after a cancel. */
export class WorkerJobCancelled extends Error {
	constructor() {
		super('simulation cancelled');
		this.name = 'WorkerJobCancelled';
	}
}

/**
 * Posts `job` to `worker` and resolves with its result. One job per worker at a time; the
 * worker stays alive afterwards for the next job (terminate it when done).
 */
export function runInWorker<R extends LangevinJobResult = LangevinJobResult>(
	worker: WorkerLike,
	job: LangevinJob,
	options: RunInWorkerOptions = {}
): Promise<R> {
	return new Promise<R>((resolve, reject) => {
		const { signal, onProgress } = options;
		if (signal?.aborted) {
			reject(new WorkerJobCancelled());
			return;
		}
		const onMessage = (data: unknown) => {
			const m = data as WorkerOutbound;
			if (m === null || typeof m !== 'object') return;
			if (m.type === 'progress') onProgress?.(m.fraction);
			else if (m.type === 'result') {
				cleanup();
				resolve(m.result as R);
			} else if (m.type === 'error') {
				cleanup();
				reject(m.cancelled ? new WorkerJobCancelled() : new Error(m.message));
			}
		};
		const onError = (e: { message?: string }) => {
			cleanup();
			reject(new Error(`worker failed: ${e?.message ?? 'unknown error'}`));
		};
		const onAbort = () => worker.postMessage({ type: 'cancel' });
		const browserMessage = (event: { data: unknown }) => onMessage(event.data);

		const isNode = 'on' in worker;
		if (isNode) {
			worker.on('message', onMessage);
			worker.on('error', onError);
		} else {
			worker.addEventListener('message', browserMessage);
			worker.addEventListener('error', onError);
		}
		signal?.addEventListener('abort', onAbort, { once: true });

		function cleanup() {
			signal?.removeEventListener('abort', onAbort);
			if (isNode) {
				worker.off('message', onMessage);
				worker.off('error', onError);
			} else {
				worker.removeEventListener('message', browserMessage);
				worker.removeEventListener('error', onError);
			}
		}

		worker.postMessage({ ...job, type: 'run' });
	});
}

/**
 * A browser module worker running langevin-worker.ts (Vite bundles it from this exact
 * expression). Call only in the browser.
 */
export function startBrowserLangevinWorker(): Worker {
	return new Worker(new URL('./langevin-worker.ts', import.meta.url), { type: 'module' });
}
