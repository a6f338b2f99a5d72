// The worker protocol: the shared message handler in-process, and a real worker_threads worker.
import { afterAll, describe, expect, it } from 'vitest';
import { Worker } from 'node:worker_threads';
import { estimateEscapeRate, sweepRates } from '$lib/physics/langevin';
import { createJobHandler, type LangevinJob, type WorkerOutbound } from '$lib/physics/langevin-worker';
import { runInWorker, WorkerJobCancelled } from '$lib/physics/run-in-worker';
import type { ModelParams } from '$lib/physics/model';

const params: ModelParams = { order: 3, detuning: 0, damping: 1, drive: 1 / 3, nonlinearity: { kind: 'kerr', K: 0 } };
const escapeOptions = { lambda: 0.3, noiseFactor: 1, trajectories: 40, maxTime: 1e4, seed: 8, escapeRadius: 2 };

/** Feeds messages to a handler and resolves at the first result or error. */
function drive(messages: unknown[], cancelAfterMs?: number) {
	const out: WorkerOutbound[] = [];
	return new Promise<WorkerOutbound[]>((resolve) => {
		const handle = createJobHandler((m) => {
			out.push(m);
			if (m.type !== 'progress') resolve(out);
		});
		for (const m of messages) handle(m);
		if (cancelAfterMs !== undefined) setTimeout(() => handle({ type: 'cancel' }), cancelAfterMs);
	});
}

describe('createJobHandler', () => {
	it('posts progress, then the same result as a direct call', async () => {
		const out = await drive([{ kind: 'escape', params, options: escapeOptions }]);
		const last = out.at(-1)!;
		expect(last.type).toBe('result');
		if (last.type !== 'result') return;
		expect(last.result).toEqual(estimateEscapeRate(params, escapeOptions));
		const fractions = out.filter((m) => m.type === 'progress').map((m) => (m as { fraction: number }).fraction);
		expect(fractions.length).toBeGreaterThan(2);
		expect(fractions.at(-1)).toBe(1);
	});

	it('stops on { type: "cancel" }', async () => {
		const out = await drive([{ kind: 'escape', params, options: { ...escapeOptions, trajectories: 1_000_000 } }], 50);
		expect(out.at(-1)).toEqual({ type: 'error', message: 'simulation cancelled', cancelled: true });
	});

	it('refuses a malformed job and a second job while one runs', async () => {
		const bad = await drive([{ kind: 'teleport', params, options: {} }]);
		expect(bad.at(-1)).toMatchObject({ type: 'error', cancelled: false, message: expect.stringMatching(/job kind must be/) });
		const busy = await drive([
			{ kind: 'escape', params, options: { ...escapeOptions, trajectories: 1_000_000 } },
			{ kind: 'escape', params, options: escapeOptions }
		]);
		expect(busy.at(-1)).toMatchObject({ type: 'error', message: 'a job is already running in this worker' });
	});

	it('passes estimator errors on', async () => {
		const out = await drive([{ kind: 'escape', params, options: { ...escapeOptions, lambda: -1 } }]);
		expect(out.at(-1)).toMatchObject({ type: 'error', cancelled: false, message: expect.stringMatching(/lambda/) });
	});
});

describe('in a worker_threads worker', () => {
	// The worker loads the TypeScript entry through tsx's loader (installed as a dev dependency).
	const entry = new URL('../../../src/lib/physics/langevin-node-worker.ts', import.meta.url).href;
	const worker = new Worker(`import('tsx/esm/api').then(({ register }) => { register(); return import(${JSON.stringify(entry)}); })`, {
		eval: true
	});
	afterAll(() => worker.terminate());

	it('runs a λ sweep with progress and returns what the same call returns in-process', async () => {
		const job: LangevinJob = {
			kind: 'sweep',
			params,
			options: { lambdas: [0.4, 0.3], noiseFactor: 1, trajectories: 20, maxTime: 1e4, seed: 5, escapeRadius: 2 }
		};
		const fractions: number[] = [];
		const result = await runInWorker(worker, job, { onProgress: (f) => fractions.push(f) });
		expect(result).toEqual(sweepRates(params, job.options as Parameters<typeof sweepRates>[1]));
		expect(fractions.length).toBeGreaterThan(1);
	}, 60_000);

	it('cancels through an AbortSignal and stays usable', async () => {
		const ac = new AbortController();
		const pending = runInWorker(
			worker,
			{ kind: 'escape', params, options: { ...escapeOptions, trajectories: 1_000_000 } },
			{ signal: ac.signal }
		);
		setTimeout(() => ac.abort(), 100);
		await expect(pending).rejects.toBeInstanceOf(WorkerJobCancelled);
		const r = await runInWorker(worker, { kind: 'escape', params, options: escapeOptions });
		expect(r).toEqual(estimateEscapeRate(params, escapeOptions));
	}, 60_000);
});
