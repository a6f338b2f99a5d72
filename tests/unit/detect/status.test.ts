// Detectors say when they cannot see: each status is checked against seeded frames fed to a real
// engine, and where a detector could have fired, against what the detector itself did.
import { describe, expect, it } from 'vitest';
import {
	DetectorEngine,
	defaultRules,
	detectorStatus,
	parseRunInfo,
	ruleStatus,
	type DetectorStatus,
	type EngineView
} from '../../../src/lib/detect';
import { flatSwitching, run6 } from './models';
import { ringFrames } from './sim';

const byKind = (list: DetectorStatus[]) => Object.fromEntries(list.map((s) => [s.kind, s]));

function feed(engine: DetectorEngine, frames: ReturnType<typeof ringFrames>) {
	return frames.flatMap((f) => engine.onFrame(f));
}

describe('detectorStatus on a fed engine', () => {
	it('lists every detector once, in the engine order', () => {
		const engine = new DetectorEngine({}, run6());
		expect(engine.status().map((s) => s.kind)).toEqual([
			'lock_lost',
			'agent_silent',
			'switching_burst',
			'rate_drift',
			'occupancy_imbalance',
			'aux_limit'
		]);
	});

	it('before the first frame, the frame-driven detectors wait; agent_silent counts from the opening', () => {
		const s = byKind(new DetectorEngine({}, run6(undefined, { openedAt_ms: 1000 })).status());
		expect(s.lock_lost).toMatchObject({ active: false, code: 'no_frames' });
		expect(s.agent_silent).toMatchObject({ active: true, code: 'watching', reason: null });
		const noOpening = byKind(new DetectorEngine({}, run6()).status());
		expect(noOpening.agent_silent).toMatchObject({ active: false, code: 'no_opening_time' });
	});

	it('without a rate model the rate detectors are inactive, and indeed raise nothing on a burst', () => {
		const engine = new DetectorEngine({}, run6());
		// A rate ten times anything plausible for 200 windows: a model would flag it at once.
		const events = feed(engine, ringFrames({ seed: 11, states: 6, windows: 200, rate_per_s: () => 20 }));
		const s = byKind(engine.status({ lastFrame: null }));
		for (const kind of ['switching_burst', 'rate_drift'] as const) {
			expect(s[kind].active).toBe(false);
			expect(s[kind].code).toBe('no_rate_model');
			expect(s[kind].reason).toMatch(/no rate model/i);
			expect(events.filter((e) => e.kind === kind)).toEqual([]);
		}
		expect(s.lock_lost.active).toBe(true);
	});

	it('with a switching model the same stream is watched, and the burst opens switching_burst', () => {
		const engine = new DetectorEngine({}, run6({ switching: flatSwitching(0.5) }));
		const frames = ringFrames({ seed: 11, states: 6, windows: 200, rate_per_s: () => 20, T_mK: () => 20 });
		const events = feed(engine, frames);
		const s = byKind(engine.status({ lastFrame: frames.at(-1) }));
		expect(s.switching_burst.active).toBe(true);
		expect(s.rate_drift.active).toBe(true);
		expect(events.some((e) => e.type === 'open' && e.kind === 'switching_burst')).toBe(true);
	});

	it('occupancy with too few switches is inactive and says how many more it needs; the detector stays silent', () => {
		const engine = new DetectorEngine({}, run6(undefined, { operatingPoint: { detuning: 0 } }));
		// State 0 holds on 20× longer than the others: a gross imbalance, but only a handful of switches.
		const frames = ringFrames({
			seed: 5,
			states: 6,
			windows: 120,
			rate_per_s: () => 0.2,
			stickiness: [0.05, 1, 1, 1, 1, 1],
			transitions: false
		});
		const events = feed(engine, frames);
		const switches = frames.reduce((a, f) => a + f.switches + f.escapes, 0);
		expect(switches).toBeLessThan(100);
		const occ = byKind(engine.status()).occupancy_imbalance;
		expect(occ).toMatchObject({ active: false, code: 'too_few_switches' });
		expect(occ.detail).toMatchObject({ switches, minSwitches: 100, needed: 100 - switches });
		expect(occ.reason).toContain(`needs 100 (${100 - switches} more)`);
		expect(events.filter((e) => e.kind === 'occupancy_imbalance')).toEqual([]);
	});

	it('occupancy turns active once the horizon holds enough switches, and then sees the same imbalance', () => {
		const engine = new DetectorEngine({}, run6(undefined, { operatingPoint: { detuning: 0 } }));
		// With transitions, as the agent sends them: without, the batch-means fallback needs far longer horizons to see this.
		const frames = ringFrames({ seed: 5, states: 6, windows: 300, rate_per_s: () => 3, stickiness: [0.05, 1, 1, 1, 1, 1] });
		const events = feed(engine, frames);
		const occ = byKind(engine.status()).occupancy_imbalance;
		expect(occ).toMatchObject({ active: true, code: 'watching' });
		expect(events.some((e) => e.type === 'open' && e.kind === 'occupancy_imbalance' && e.key === 'states')).toBe(true);
	});

	it('with transitions but too few switches for the states test, only the pairs test runs (a note says so)', () => {
		const engine = new DetectorEngine({}, run6(undefined, { operatingPoint: { detuning: 0 } }));
		const frames = ringFrames({ seed: 8, states: 6, windows: 150, rate_per_s: () => 0.4 });
		feed(engine, frames);
		const switches = frames.reduce((a, f) => a + f.switches, 0);
		expect(switches).toBeGreaterThanOrEqual(20);
		expect(switches).toBeLessThan(100);
		const occ = byKind(engine.status()).occupancy_imbalance;
		expect(occ).toMatchObject({ active: true, code: 'limited' });
		expect(occ.notes.map((n) => n.code)).toEqual(['states_test_waiting']);
	});

	it('states that are not symmetric (detuned) stop the states test and say why', () => {
		const engine = new DetectorEngine({}, run6(undefined, { operatingPoint: { detuning: 0.3 } }));
		feed(engine, ringFrames({ seed: 2, states: 6, windows: 200, rate_per_s: () => 2, transitions: false }));
		expect(byKind(engine.status()).occupancy_imbalance).toMatchObject({ active: false, code: 'not_symmetric' });
	});

	it('frames without mxc_mK: the rate detectors stay active but note the prediction at the nominal temperature', () => {
		const engine = new DetectorEngine({}, run6({ switching: flatSwitching(0.5) }));
		const frames = ringFrames({ seed: 3, states: 6, windows: 30, rate_per_s: () => 0.5 });
		feed(engine, frames);
		const s = byKind(engine.status({ lastFrame: frames.at(-1) }));
		for (const kind of ['switching_burst', 'rate_drift'] as const) {
			expect(s[kind].active).toBe(true);
			expect(s[kind].code).toBe('limited');
			const note = s[kind].notes.find((n) => n.code === 'no_temperature');
			expect(note?.text).toContain('nominal 20 mK');
		}
		// The default aux limit watches mxc_mK, which these frames never carry.
		expect(s.aux_limit).toMatchObject({ active: false, code: 'aux_absent' });

		const warm = ringFrames({ seed: 3, states: 6, windows: 1, rate_per_s: () => 0.5, T_mK: () => 22, firstSeq: 31 });
		feed(engine, warm);
		const measured = byKind(engine.status({ lastFrame: warm[0] }));
		expect(measured.switching_burst.notes.map((n) => n.code)).not.toContain('no_temperature');
		expect(measured.aux_limit.active).toBe(true);
	});

	it('a rule turned off is inactive, "turned off", and its detector raises nothing', () => {
		const rules = defaultRules();
		rules.lock_lost.enabled = false;
		const engine = new DetectorEngine(rules, run6());
		const frames = ringFrames({ seed: 4, states: 6, windows: 20, rate_per_s: () => 1 }).map((f) => ({ ...f, lock: 0.1 }));
		const events = feed(engine, frames);
		const lock = byKind(engine.status()).lock_lost;
		expect(lock).toMatchObject({ active: false, code: 'disabled' });
		expect(lock.reason).toMatch(/turned off/i);
		expect(events.filter((e) => e.kind === 'lock_lost')).toEqual([]);
		// Turned back on, it watches again (and the low lock opens at the next low windows).
		engine.setRules(defaultRules(), 0);
		expect(byKind(engine.status()).lock_lost.active).toBe(true);
	});

	it('after the run ends every detector says so', () => {
		const engine = new DetectorEngine({}, run6({ switching: flatSwitching(0.5) }));
		feed(engine, ringFrames({ seed: 9, states: 6, windows: 5, rate_per_s: () => 0.5 }));
		engine.endRun(0);
		expect(engine.status().every((s) => !s.active && s.code === 'run_ended')).toBe(true);
		const open = new DetectorEngine({}, run6());
		expect(open.status({ runEnded: true }).every((s) => s.code === 'run_ended')).toBe(true);
	});

	it('a restored engine reports the same status as the one it was saved from', () => {
		const engine = new DetectorEngine({}, run6({ switching: flatSwitching(0.5) }, { operatingPoint: { detuning: 0 } }));
		const frames = ringFrames({ seed: 21, states: 6, windows: 90, rate_per_s: () => 0.3 });
		feed(engine, frames);
		const restored = DetectorEngine.restore(JSON.parse(JSON.stringify(engine.snapshot())));
		expect(restored.status({ lastFrame: frames.at(-1) })).toEqual(engine.status({ lastFrame: frames.at(-1) }));
	});

	it('rate_drift watching a process without a model notes it; the other process still runs', () => {
		const rules = defaultRules();
		rules.rate_drift.processes = ['switching', 'escape'];
		const engine = new DetectorEngine(rules, run6({ switching: flatSwitching(0.5) }));
		feed(engine, ringFrames({ seed: 1, states: 6, windows: 10, rate_per_s: () => 0.5, T_mK: () => 20 }));
		const drift = byKind(engine.status()).rate_drift;
		expect(drift.active).toBe(true);
		expect(drift.notes.map((n) => n.code)).toContain('model_missing');
		expect(drift.detail).toMatchObject({ processes: ['switching'] });
	});
});

describe('ruleStatus for a setup (no run)', () => {
	const setupRun = (models?: Parameters<typeof run6>[0]) => parseRunInfo({ states: 6, ...(models ? { rateModels: models } : {}) });

	it('no rate model: the rate rules cannot run, the others can', () => {
		const s = byKind(ruleStatus(defaultRules(), setupRun()));
		expect(s.switching_burst).toMatchObject({ active: false, code: 'no_rate_model' });
		expect(s.rate_drift).toMatchObject({ active: false, code: 'no_rate_model' });
		expect(s.lock_lost).toMatchObject({ active: true, code: 'watching' });
		expect(s.occupancy_imbalance.active).toBe(true);
	});

	it('a switching model lets them run; rules turned off or without limits cannot', () => {
		const rules = defaultRules();
		rules.occupancy_imbalance.enabled = false;
		rules.aux_limit.limits = [];
		const s = byKind(ruleStatus(rules, setupRun({ switching: flatSwitching(0.5) })));
		expect(s.switching_burst).toMatchObject({ active: true, code: 'watching' });
		expect(s.rate_drift.active).toBe(true);
		expect(s.occupancy_imbalance).toMatchObject({ active: false, code: 'disabled' });
		expect(s.aux_limit).toMatchObject({ active: false, code: 'no_limits' });
	});

	it('a state object of unknown shape costs details, never an exception', () => {
		const engine = new DetectorEngine({}, run6({ switching: flatSwitching(0.5) }));
		const snap = engine.snapshot();
		const view: EngineView = {
			...snap,
			lastSeq: 10,
			detectors: { rate_drift: { switching: 'x' }, occupancy_imbalance: { horizon: { len: 'a' } }, switching_burst: 7 }
		};
		const s = byKind(detectorStatus(view));
		expect(s.rate_drift.active).toBe(true);
		expect(s.switching_burst.active).toBe(true);
		expect(s.occupancy_imbalance.active).toBe(true);
	});
});
