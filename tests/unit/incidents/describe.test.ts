// The incident sentences (page and e-mail) on true evidence straight from the detector engine:
// each must carry the right numbers and times and no machine field names. Numbers are read back
// from the evidence here and times through the Date API, not through the module under test.
import { describe, expect, it } from 'vitest';
import { DetectorEngine, type DetectorEvent } from '../../../src/lib/detect';
import type { Frame } from '../../../src/lib/protocol/frame';
import { describeAsText, describeIncident, type IncidentFacts } from '../../../src/lib/incidents/describe';
import { kindLabel, KIND_LABELS } from '../../../src/lib/incidents/kinds';
import { DETECTOR_KINDS } from '../../../src/lib/detect/status';
import { frame } from '../detect/frames';
import { flatSwitching, noBaseline, run6 } from '../detect/models';
import { ringFrames } from '../detect/sim';

const feed = (engine: DetectorEngine, fs: Frame[]) => fs.flatMap((f) => engine.onFrame(f));
const firstOpen = (events: DetectorEvent[], kind: string, key?: string) => {
	const e = events.find((x) => x.type === 'open' && x.kind === kind && (key === undefined || x.key === key));
	if (!e) throw new Error(`the engine did not open ${kind}`);
	return e;
};
const clock = (ms: number) => new Date(ms).toISOString().slice(11, 19) + ' UTC';
const where = { setupName: 'Fridge Aster', runName: 'Cooldown 14' };

// Units people write (mK, dBm) are not field names; everything else shaped like an identifier is.
const UNITS = new Set(['mK', 'dBm', 'µV', 'mV', 'GHz', 'MHz']);
function machineWords(text: string): string[] {
	const snake = text.match(/\b[A-Za-z]+_[A-Za-z0-9_]+\b/g) ?? [];
	const camel = (text.match(/\b[a-z]+[A-Z][A-Za-z]*\b/g) ?? []).filter((w) => !UNITS.has(w));
	return [...snake, ...camel, ...(text.match(/[{}[\]"]/g) ?? [])];
}
function textOf(f: IncidentFacts): string {
	const t = describeAsText(f);
	expect(machineWords(t)).toEqual([]);
	expect(t).not.toMatch(/undefined|NaN|null|\[object/);
	return t;
}

describe('kind labels', () => {
	it('one label per detector kind, and "Aux limit" for aux_limit', () => {
		for (const k of DETECTOR_KINDS) expect(KIND_LABELS[k]).toBeTruthy();
		expect(kindLabel('aux_limit')).toBe('Aux limit');
		expect(kindLabel('some_future_kind')).toBe('Some future kind');
	});
});

describe('lock_lost', () => {
	const engine = new DetectorEngine({ lock_lost: { version: 4 } }, run6());
	const open = firstOpen(
		feed(
			engine,
			[0.42, 0.38, 0.31, 0.27, 0.22].map((l, i) => frame(1040 + i, l))
		),
		'lock_lost'
	);
	it('threshold, streak, start time and latest value', () => {
		const t = textOf({ kind: 'lock_lost', evidence: open.evidence, ...where });
		expect(t).toContain('Fridge Aster, run Cooldown 14');
		expect(t).toContain(`below ${open.evidence.threshold}`);
		expect(t).toContain('5 windows in a row');
		expect(t).toContain(`since ${clock(frame(1040, 0).t)}`);
		expect(t).toContain(`0.22 at ${clock(frame(1044, 0).t)}`);
	});
});

describe('agent_silent', () => {
	it('silence, limit and since when', () => {
		const engine = new DetectorEngine({}, run6());
		engine.onFrame(frame(9, 0.9), Date.UTC(2025, 5, 15, 2, 0, 0));
		const [open] = engine.onClock(Date.UTC(2025, 5, 15, 2, 1, 30));
		const t = textOf({ kind: 'agent_silent', evidence: open.evidence });
		expect(t).toContain('for 1 min 30 s');
		expect(t).toContain('since 02:00:00 UTC on 15 June 2025');
		expect(t).toContain('The limit is 1 min 00 s');
		expect(t).toContain('number 9');
	});
});

describe('aux_limit', () => {
	it('the value in words and units, the limit and how far past it', () => {
		const mxc = (seq: number, v: number): Frame => ({ ...frame(seq, 0.95), aux: { mxc_mK: v } });
		const open = firstOpen(
			feed(
				new DetectorEngine({}, run6()),
				[29, 31, 30.5, 33.25].map((v, i) => mxc(i + 1, v))
			),
			'aux_limit'
		);
		const t = textOf({ kind: 'aux_limit', key: 'mxc_mK', evidence: open.evidence });
		expect(t).toContain('mixing-chamber temperature');
		expect(t).toContain('above 30 mK');
		expect(t).toContain(`33.25 mK at ${clock(frame(4, 0).t)}`);
		expect(t).toContain('3.25 mK above the limit');
	});
});

describe('switching_burst', () => {
	it('observed against predicted, the allowed range and the chance', () => {
		const run = run6({ switching: flatSwitching(0.5) });
		const fs = [
			...Array.from({ length: 30 }, (_, i) => ({ ...frame(i + 1, 0.95), switches: i % 2 })),
			{ ...frame(31, 0.95), switches: 14 }
		];
		const open = firstOpen(feed(new DetectorEngine({ rate_drift: { enabled: false } }, run), fs), 'switching_burst');
		const worst = open.evidence.worst as Record<string, number>;
		const t = textOf({ kind: 'switching_burst', key: 'switching', evidence: open.evidence });
		expect(t).toContain(`${worst.observed} switches`);
		// 14 switches in a 1 s window is 14 per second; 0.5 predicted
		expect(t).toContain(`${worst.observed} switches per second, expected 0.5`);
		expect(t).toContain(`${worst.thresholdCount} switches or more`);
		expect(t).toMatch(/chance of 14 or more is [\d.]+ × 10⁻[⁰¹²³⁴⁵⁶⁷⁸⁹]+, against a limit of/);
	});
});

describe('switching_burst with an uncertain model', () => {
	it('gives the range the model allows, symmetric in ln W about the prediction', () => {
		const run = run6({ switching: { ...flatSwitching(0.5), W0_sigma: 0.2 } });
		const fs = [
			...Array.from({ length: 30 }, (_, i) => ({ ...frame(i + 1, 0.95), switches: i % 2 })),
			{ ...frame(31, 0.95), switches: 20 }
		];
		const open = firstOpen(feed(new DetectorEngine({ rate_drift: { enabled: false } }, run), fs), 'switching_burst');
		const worst = open.evidence.worst as Record<string, number>;
		expect(worst.testedAgainst).toBeGreaterThan(worst.expected);
		const hi = Number(worst.testedAgainst.toPrecision(2));
		const lo = Number(((worst.expected * worst.expected) / worst.testedAgainst).toPrecision(2));
		const t = textOf({ kind: 'switching_burst', key: 'switching', evidence: open.evidence });
		expect(t).toContain(`expected 0.5 (${lo}–${hi}), the range being what the rate model’s uncertainty allows`);
	});
});

describe('rate_drift', () => {
	it('ratio with its interval, since when, and the statistic against its decision limit', () => {
		const run = run6({ switching: flatSwitching(1) });
		const fs = Array.from({ length: 80 }, (_, i) => ({ ...frame(i + 1, 0.95), switches: 2 }));
		const open = firstOpen(
			feed(new DetectorEngine({ switching_burst: { enabled: false }, rate_drift: noBaseline }, run), fs),
			'rate_drift',
			'switching'
		);
		const ev = open.evidence as any;
		const t = textOf({ kind: 'rate_drift', key: 'switching', evidence: ev, ...where });
		expect(t).toContain('drifted above its prediction');
		expect(t).toContain(`since ${clock(ev.sinceChange.from_ms)}`);
		expect(t).toContain(`${ev.sinceChange.observed} switches where the model predicted ${ev.sinceChange.expected}`);
		expect(t).toContain('2 times the prediction');
		expect(t).toContain(
			`${Math.round(ev.ratio.confidence * 100)} % interval (${Number(ev.ratio.lower.toPrecision(2))}–${Number(ev.ratio.upper.toPrecision(2))})`
		);
		expect(t).toContain(`decision limit of ${Number(ev.decisionInterval.toPrecision(3))}`);
	});
});

describe('occupancy_imbalance', () => {
	const rules = { occupancy_imbalance: { horizonWindows: 100, minSwitches: 50, clearWindows: 10 } };
	it('states: the most and least filled state against equal filling', () => {
		const fs = ringFrames({ seed: 5, states: 6, windows: 400, rate_per_s: () => 3, stickiness: [1, 1, 0.25, 1, 1, 1] });
		const open = firstOpen(feed(new DetectorEngine(rules, run6()), fs), 'occupancy_imbalance', 'states');
		const ev = open.evidence as any;
		const t = textOf({ kind: 'occupancy_imbalance', key: 'states', evidence: ev, states: 6 });
		expect(t).toContain(`State 2 (120°) holds ${Math.round(100 * ev.mostOver.fraction)} %`);
		expect(t).toContain('equal filling gives 16.7 % each');
		expect(t).toContain(`over the last ${ev.horizon.windows} windows`);
	});
	it('pairs: the share on unexpected pairs against the tolerated share', () => {
		const fs = ringFrames({ seed: 8, states: 6, windows: 300, rate_per_s: () => 2, longJumps: 0.5 });
		const open = firstOpen(feed(new DetectorEngine(rules, run6()), fs), 'occupancy_imbalance', 'pairs');
		const ev = open.evidence as any;
		const t = textOf({ kind: 'occupancy_imbalance', key: 'pairs', evidence: ev, states: 6 });
		expect(t).toContain(`${ev.unexpected} of ${ev.switches} switches`);
		expect(t).toContain(`tolerated ${Math.round(100 * ev.maxUnexpectedFraction)} %`);
	});
});

describe('clear reasons', () => {
	it('a condition no longer watched says so in words', () => {
		const d = describeIncident({
			kind: 'switching_burst',
			evidence: { rule: 'switching_burst', version: 2, reason: 'rate_model_removed' }
		});
		expect(d.what).toContain('no rate model any more');
		expect(machineWords(d.what)).toEqual([]);
	});
});
