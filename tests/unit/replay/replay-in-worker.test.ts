// The replay's worker path, from source (the worker loads the TypeScript entry through tsx): pages
// posted to a worker thread give the incidents of the replay run in this thread, with at most two
// pages in flight, and a cancel stops it.
import { describe, expect, it } from 'vitest';
import { replayIncidents, replayRun } from '../../../src/lib/detect/replay';
import { RulesRefused } from '../../../src/lib/detect/rules';
import type { Frame } from '../../../src/lib/protocol/frame';
import { ReplayCancelled, replayInWorker } from '../../../src/lib/server/replay/replay-in-worker';
import type { FramePage } from '../../../src/lib/server/replay/worker-protocol';
import { noiseFactor } from '../../../src/lib/physics/occupation';
import { ringFrames, T0_ms } from '../detect/sim';
import { run6, warmSwitching } from '../detect/models';

const W = (T: number) => 74.2 * Math.exp(-6 / noiseFactor(1, T));
const T = (i: number) => (i >= 1500 && i < 1600 ? 33 : 20 + 0.001 * (i % 50));
const rate = (i: number) => W(T(i)) * (i >= 2500 && i < 3500 ? 2.2 : 1) * (i >= 800 && i < 805 ? 25 : 1);
const frames: Frame[] = ringFrames({ seed: 41, states: 6, windows: 4000, rate_per_s: rate, T_mK: T }).map((f) =>
	f.seq >= 3700 && f.seq < 3720 ? { ...f, lock: 0.2 } : f
);
// A silence of 90 s in the receipt times, so agent_silent opens too.
const receivedAt = frames.map((f) => f.t + 30 + (f.seq > 1200 ? 90_000 : 0));
const endedAt_ms = receivedAt[receivedAt.length - 1] + 500;
const rules = { rate_drift: { horizonWindows: 120 }, occupancy_imbalance: { horizonWindows: 200 } };
const run = run6({ switching: warmSwitching }, { openedAt_ms: T0_ms });

function pages(size: number, onPage?: (index: number) => void): AsyncIterable<FramePage> {
	return (async function* () {
		for (let at = 0, k = 0; at < frames.length; at += size, k++) {
			onPage?.(k);
			yield { frames: frames.slice(at, at + size), receivedAt_ms: receivedAt.slice(at, at + size) };
		}
	})();
}

describe('replay in a worker thread', () => {
	const inThread = replayIncidents(replayRun(frames, rules, run, { receivedAt_ms: (_f, i) => receivedAt[i], endedAt_ms }));

	it('gives the incidents of the replay in this thread, with at most two pages in flight', async () => {
		const kinds = new Set(inThread.map((i) => i.kind));
		for (const k of ['switching_burst', 'lock_lost', 'agent_silent']) expect(kinds).toContain(k);

		const progress: number[] = [];
		let ahead = 0;
		const outcome = await replayInWorker(
			pages(300, (k) => (ahead = Math.max(ahead, k - progress.length))),
			{ rules, run, endedAt_ms },
			{ onProgress: (done) => progress.push(done) }
		);
		expect(outcome.frameCount).toBe(frames.length);
		expect(outcome.incidents).toEqual(inThread);
		// Page k is read only once page k-2 is through the engine.
		expect(ahead).toBeLessThanOrEqual(1);
		expect(progress).toEqual(Array.from({ length: Math.ceil(frames.length / 300) }, (_, k) => Math.min((k + 1) * 300, frames.length)));
	}, 60_000);

	it('stops when aborted', async () => {
		const ac = new AbortController();
		const pending = replayInWorker(
			pages(200, (k) => k === 3 && ac.abort()),
			{ rules, run },
			{ signal: ac.signal }
		);
		await expect(pending).rejects.toBeInstanceOf(ReplayCancelled);
	}, 60_000);

	it('passes the engine’s errors on', async () => {
		// A RangeError stays one across the thread boundary: the route answers it with 400.
		const failed = replayInWorker(pages(500), { rules: { lock_lost: { threshold: 'high' } }, run });
		await expect(failed).rejects.toBeInstanceOf(RangeError);
		await expect(failed).rejects.toThrow(/lock_lost/);
		// A refused rule keeps its field as data too, for the replay form to put the message on its input:
		// a pair naming state 7 of this 6-state run is refused by the engine inside the worker.
		const misfit = await replayInWorker(pages(500), { rules: { occupancy_imbalance: { expectedPairs: [[0, 7]] } }, run }).catch((e) => e);
		expect(misfit).toBeInstanceOf(RulesRefused);
		expect(misfit).toMatchObject({
			path: ['occupancy_imbalance', 'expectedPairs', '0', '1'],
			problem: expect.stringMatching(/state 7 does not exist/)
		});
	}, 60_000);
});
