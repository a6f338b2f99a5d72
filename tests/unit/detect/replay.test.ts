// Replay: the same frames, rules and run information give the same events as the live engine,
// also across a snapshot/restore at any point; the comparison helper matches incidents.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
	compareReplay,
	DetectorEngine,
	IncidentFold,
	Replayer,
	replayIncidents,
	replayRun,
	type DetectorEvent
} from '../../../src/lib/detect';
import type { Frame } from '../../../src/lib/protocol/frame';
import { countFrames, ringFrames, T0_ms } from './sim';
import { run6, warmSwitching } from './models';
import { noiseFactor } from '../../../src/lib/physics/occupation';

const W = (T: number) => 74.2 * Math.exp(-6 / noiseFactor(1, T));

/** A scripted run with a bit of everything: a switching burst, a drift, an aux excursion, a lock loss, a gap. */
function scriptedRun(): Frame[] {
	const T = (i: number) => (i >= 1500 && i < 1600 ? 33 : 20 + 0.001 * (i % 50));
	const rate = (i: number) => W(T(i)) * (i >= 2500 && i < 3500 ? 2.2 : 1) * (i >= 800 && i < 805 ? 25 : 1);
	const fs = ringFrames({ seed: 99, states: 6, windows: 4000, rate_per_s: rate, T_mK: T });
	return fs
		.filter((f) => f.seq < 2000 || f.seq > 2040) // windows that never arrived
		.map((f) => (f.seq >= 3700 && f.seq < 3720 ? { ...f, lock: 0.2 } : f));
}
// the scripted drift comes early in the run: charted against the model, not a learned baseline
const rules = { rate_drift: { horizonWindows: 120, baseline_h: 0 }, occupancy_imbalance: { horizonWindows: 200 } };
const run = run6({ switching: warmSwitching }, { openedAt_ms: T0_ms });
const kindsOf = (events: DetectorEvent[]) => events.filter((e) => e.type === 'open').map((e) => `${e.kind}:${e.key ?? ''}`);

describe('replay', () => {
	const frames = scriptedRun();
	// Live ingest also ticks the clock for agent_silent; no silence here reaches its 60 s.
	const live = (() => {
		const engine = new DetectorEngine(rules, run);
		return frames.flatMap((f) => [...engine.onFrame(f), ...(f.seq % 10 === 0 ? engine.onClock(f.t + 500) : [])]);
	})();

	it('the scripted run raises the burst, the drift, the aux excursion and the lock loss', () => {
		const kinds = new Set(kindsOf(live));
		for (const k of ['switching_burst:switching', 'rate_drift:switching', 'aux_limit:mxc_mK', 'lock_lost:']) expect(kinds).toContain(k);
		// the drift at steady temperature is reported as unexplained
		const drift = live.find((e) => e.type === 'open' && e.kind === 'rate_drift' && e.seq! > 2500)!;
		expect((drift.evidence as any).explainedByTemperature).toBe(false);
	});

	it('gives identical events for unchanged rules', () => {
		expect(replayRun(frames, rules, run)).toEqual(live);
	});

	it('snapshot and restore at any point, through JSON text, gives identical events (property, seeded)', () => {
		fc.assert(
			fc.property(fc.integer({ min: 0, max: frames.length }), (cut) => {
				const first = new DetectorEngine(rules, run);
				const head = frames.slice(0, cut).flatMap((f) => first.onFrame(f));
				const resumed = DetectorEngine.restore(JSON.parse(JSON.stringify(first.snapshot())));
				const tail = frames.slice(cut).flatMap((f) => resumed.onFrame(f));
				expect([...head, ...tail]).toEqual(live);
			}),
			{ seed: 3, numRuns: 12 }
		);
	});

	it('a snapshot keeps the rate models and designs, so a restored engine predicts the same', () => {
		const engine = new DetectorEngine(rules, run);
		frames.slice(0, 100).forEach((f) => engine.onFrame(f));
		const snap = JSON.parse(JSON.stringify(engine.snapshot()));
		expect(snap.run.rateModels.switching).toMatchObject({ W0_per_s: 74.2, A: 6 });
		expect(Object.keys(snap.detectors.rate_drift.designs).length).toBeGreaterThan(0);
		expect(DetectorEngine.restore(snap).run).toEqual(engine.run);
	});

	it('other rules: the comparison lists what they would have raised and what they would not', () => {
		const actual = replayIncidents(live).map((r, i) => ({
			id: `inc-${i}`,
			kind: r.kind,
			key: r.key === '' ? null : r.key,
			openedAt_ms: r.openedAt_ms,
			openedSeq: r.openedSeq,
			clearedAt_ms: r.clearedAt_ms
		}));
		const other = { ...rules, aux_limit: { limits: [{ name: 'mxc_mK', above: 40 }] }, lock_lost: { threshold: 0.1 } };
		const cmp = compareReplay(actual, replayRun(frames, other, run));
		expect(cmp.onlyActual.map((a) => a.kind).sort()).toEqual(['aux_limit', 'lock_lost']);
		expect(cmp.onlyReplay).toEqual([]);
		expect(cmp.both.length).toBe(actual.length - 2);
		for (const b of cmp.both) expect(b.openShift_ms).toBe(0);
		// stricter aux limit: the replay raises one the live rules did not
		const strict = compareReplay(
			actual,
			replayRun(frames, { ...rules, aux_limit: { limits: [{ name: 'mxc_mK', above: 20.04, clearBelow: 20.01 }] } }, run)
		);
		expect(strict.onlyReplay.some((r) => r.kind === 'aux_limit')).toBe(true);
	});

	it('incidents fold open, updates and clear; an open one has no clear', () => {
		const folded = replayIncidents(live);
		expect(folded.length).toBe(live.filter((e) => e.type === 'open').length);
		for (const f of folded) if (f.clearedAt_ms !== null) expect(f.clearedAt_ms).toBeGreaterThanOrEqual(f.openedAt_ms);
		const updates = live.filter((e) => e.type === 'update').length;
		expect(folded.reduce((a, f) => a + f.updates, 0)).toBe(updates);
	});
});

describe('replay of agent_silent and of changes during the run', () => {
	it('a silence in the frames’ own time opens at the limit and clears at the next frame', () => {
		const fs = countFrames({ seed: 1, windows: 20, mean: () => 1 });
		const gapped = [...fs.slice(0, 10), ...fs.slice(10).map((f) => ({ ...f, t: f.t + 300_000 }))];
		const events = replayRun(gapped, {}, run6(undefined, { openedAt_ms: gapped[0].t - 1000 }), { endedAt_ms: gapped[19].t + 1000 });
		const silent = events.filter((e) => e.kind === 'agent_silent');
		expect(silent.map((e) => e.type)).toEqual(['open', 'clear']);
		expect(silent[0].at_ms).toBe(gapped[9].t + 60_000);
		expect(silent[1]).toMatchObject({ seq: 11, at_ms: gapped[10].t });
	});

	it('receipt times, when stored, stand in for the server clock', () => {
		const fs = countFrames({ seed: 1, windows: 5, mean: () => 1 });
		const received = [0, 1000, 2000, 200_000, 201_000];
		const events = replayRun(fs, {}, run6(undefined, { openedAt_ms: -500 }), { receivedAt_ms: (_f, i) => received[i] });
		expect(events.filter((e) => e.kind === 'agent_silent').map((e) => [e.type, e.at_ms])).toEqual([
			['open', 62_000],
			['clear', 200_000]
		]);
	});

	it('rule changes replayed after the same frames reproduce the live events', () => {
		const fs = scriptedRun().slice(0, 2000);
		const engine = new DetectorEngine(rules, run);
		const liveEvents: DetectorEvent[] = [];
		const change = { ...rules, aux_limit: { version: 2, limits: [{ name: 'mxc_mK', above: 25 }] } };
		for (const f of fs) {
			liveEvents.push(...engine.onFrame(f));
			if (f.seq === 1000) liveEvents.push(...engine.setRules(change, f.t));
		}
		const replayed = replayRun(fs, rules, run, { ruleChanges: [{ afterSeq: 1000, at_ms: fs[999].t, rules: change }] });
		expect(replayed).toEqual(liveEvents);
	});
});

describe('incremental replay', () => {
	// Receipt times with a silence long enough for agent_silent (60 s by default) inside a page and
	// one across a page boundary, so the clock ticks fall on both sides of a push.
	const frames = scriptedRun().slice(0, 3000);
	const receivedAt = frames.map((f) => f.t + 40 + (f.seq > 700 ? 90_000 : 0) + (f.seq > 1500 ? 120_000 : 0));
	const change = { ...rules, lock_lost: { threshold: 0.5, windows: 3 } };
	const options = {
		receivedAt_ms: (_f: Frame, i: number) => receivedAt[i],
		ruleChanges: [{ afterSeq: 1200, at_ms: frames[1199].t, rules: change }],
		endedAt_ms: receivedAt[receivedAt.length - 1] + 100_000
	};
	const whole = replayRun(frames, rules, run, options);

	it('the stream has silences and a rule change to carry across pages', () => {
		expect(whole.filter((e) => e.kind === 'agent_silent' && e.type === 'open').length).toBe(3);
	});

	it('pushed in pages of any size, it gives the events of replayRun (property, seeded)', () => {
		fc.assert(
			fc.property(fc.array(fc.integer({ min: 1, max: 900 }), { minLength: 1, maxLength: 12 }), (sizes) => {
				const replayer = new Replayer(rules, run, { ruleChanges: options.ruleChanges });
				const events: DetectorEvent[] = [];
				let at = 0;
				for (let k = 0; at < frames.length; k++) {
					const size = sizes[k % sizes.length];
					events.push(...replayer.push(frames.slice(at, at + size), receivedAt.slice(at, at + size)));
					at += size;
				}
				events.push(...replayer.finish(options.endedAt_ms));
				expect(replayer.frameCount).toBe(frames.length);
				expect(events).toEqual(whole);
			}),
			{ seed: 7, numRuns: 10 }
		);
	});

	it('folding incidents page by page gives replayIncidents of all events', () => {
		const fold = new IncidentFold();
		for (let at = 0; at < whole.length; at += 37) fold.add(whole.slice(at, at + 37));
		expect(fold.incidents).toEqual(replayIncidents(whole));
	});

	it('refuses frames after finish', () => {
		const replayer = new Replayer(rules, run);
		replayer.finish();
		expect(() => replayer.push(frames.slice(0, 1))).toThrow(/after finish/);
	});
});
