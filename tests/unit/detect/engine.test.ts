// The engine's promises from the detector brief: determinism, snapshot/restore as plain JSON,
// at most one open condition per kind, clear errors for bad rules, frames and snapshots.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { DetectorEngine, defaultRules, detectAll, parseDetectorRules, type DetectorEvent } from '../../../src/lib/detect';
import type { Frame } from '../../../src/lib/protocol/frame';
import { frame, K } from './frames';

const run = { runId: 'run-1', states: K, openedAt_ms: 0 };

/** A scripted stream with clock ticks between frames: lock loss, recovery, a stall, a second loss. */
type Step = { frame: Frame; receivedAt_ms: number } | { clock_ms: number };
function script(): Step[] {
	const steps: Step[] = [];
	let now = 0;
	let seq = 0;
	const push = (lock: number, shots = 600) => {
		seq += 1;
		now += 1000;
		steps.push({ frame: frame(seq, lock, { shots }), receivedAt_ms: now });
		steps.push({ clock_ms: now + 500 });
	};
	for (let i = 0; i < 20; i++) push(0.9);
	for (let i = 0; i < 12; i++) push(i % 4 === 0 ? 0.05 : 0.3, i === 6 ? 0 : 600);
	for (let i = 0; i < 8; i++) push(0.6);
	for (let i = 0; i < 10; i++) push(0.85);
	for (let t = 1; t <= 9; t++) steps.push({ clock_ms: now + t * 10_000 });
	now += 90_000;
	seq += 7; // a gap: seven windows never arrived
	for (let i = 0; i < 6; i++) push(0.2);
	return steps;
}

function play(engine: DetectorEngine, steps: Step[]): DetectorEvent[] {
	return steps.flatMap((s) => ('clock_ms' in s ? engine.onClock(s.clock_ms) : engine.onFrame(s.frame, s.receivedAt_ms)));
}

describe('determinism', () => {
	it('the scripted run raises the expected sequence of events', () => {
		const kinds = play(new DetectorEngine({}, run), script())
			.filter((e) => e.type !== 'update')
			.map((e) => `${e.type}:${e.kind}`);
		expect(kinds).toEqual(['open:lock_lost', 'clear:lock_lost', 'open:agent_silent', 'clear:agent_silent', 'open:lock_lost']);
	});

	it('the same steps twice give identical events', () => {
		expect(play(new DetectorEngine({}, run), script())).toEqual(play(new DetectorEngine({}, run), script()));
	});

	it('snapshot and restore at any point, through JSON text, gives identical events', () => {
		const steps = script();
		const straight = play(new DetectorEngine({}, run), steps);
		for (let cut = 0; cut <= steps.length; cut += 7) {
			const first = new DetectorEngine({}, run);
			const before = play(first, steps.slice(0, cut));
			const stored = JSON.stringify(first.snapshot());
			const resumed = DetectorEngine.restore(JSON.parse(stored));
			expect([...before, ...play(resumed, steps.slice(cut))]).toEqual(straight);
		}
	});

	it('a snapshot is plain JSON and does not share memory with the engine', () => {
		const engine = new DetectorEngine({}, run);
		play(engine, script().slice(0, 40));
		const snap = engine.snapshot();
		expect(JSON.parse(JSON.stringify(snap))).toEqual(snap);
		(snap.detectors.lock_lost as { low: { count: number } }).low.count = 999;
		expect((engine.snapshot().detectors.lock_lost as { low: { count: number } }).low.count).not.toBe(999);
	});

	it('random lock streams: snapshot/restore at a random cut changes nothing (property, seeded)', () => {
		fc.assert(
			fc.property(fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 1, maxLength: 80 }), fc.nat(), (locks, cutSeed) => {
				const fs = locks.map((lock, i) => frame(i + 1, lock));
				const cut = cutSeed % (fs.length + 1);
				const a = new DetectorEngine({ lock_lost: { windows: 2, clearWindows: 2 } }, run);
				const head = fs.slice(0, cut).flatMap((f) => a.onFrame(f));
				const b = DetectorEngine.restore(JSON.parse(JSON.stringify(a.snapshot())));
				const tail = fs.slice(cut).flatMap((f) => b.onFrame(f));
				expect([...head, ...tail]).toEqual(detectAll({ lock_lost: { windows: 2, clearWindows: 2 } }, run, fs));
			}),
			{ seed: 7, numRuns: 200 }
		);
	});
});

describe('one open condition per kind', () => {
	it('opens and clears alternate per kind over any lock stream (property, seeded)', () => {
		fc.assert(
			fc.property(fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { maxLength: 150 }), (locks) => {
				const events = detectAll(
					{ lock_lost: { windows: 1, clearWindows: 1 } },
					run,
					locks.map((l, i) => frame(i + 1, l))
				);
				let open = false;
				for (const e of events) {
					if (e.type === 'open') expect(open).toBe(false);
					else expect(open).toBe(true);
					if (e.type !== 'update') open = e.type === 'open';
				}
			}),
			{ seed: 11, numRuns: 200 }
		);
	});
});

describe('rules', () => {
	it('fill missing rules and fields with defaults', () => {
		const rules = parseDetectorRules({ lock_lost: { threshold: 0.4 } });
		expect(rules.lock_lost).toMatchObject({ threshold: 0.4, windows: 5, clearThreshold: 0.7, version: 1 });
		expect(rules.agent_silent).toEqual(defaultRules().agent_silent);
	});

	it('name the bad field', () => {
		expect(() => parseDetectorRules({ lock_lost: { threshold: 0.8 } })).toThrow(/lock_lost\.clearThreshold/);
		expect(() => parseDetectorRules({ lock_lost: { windows: 2.5 } })).toThrow(/lock_lost\.windows: must be a whole number/);
		expect(() => parseDetectorRules({ agent_silent: { after_s: -1 } })).toThrow(/agent_silent\.after_s/);
		expect(() => parseDetectorRules({ lock_lost: { treshold: 0.4 } })).toThrow(/lock_lost.*treshold/);
		expect(() => new DetectorEngine({ lock_lost: { threshold: 2 } }, run)).toThrow(/lock_lost\.threshold: must be between 0 and 1/);
	});

	it('turning a rule off clears its open condition; turning it on again counts afresh', () => {
		const engine = new DetectorEngine({}, run);
		for (let s = 1; s <= 5; s++) engine.onFrame(frame(s, 0.1));
		expect(engine.openConditions()).toHaveLength(1);
		const off = engine.setRules({ lock_lost: { enabled: false, version: 2 } }, 99);
		expect(off).toMatchObject([{ type: 'clear', kind: 'lock_lost', at_ms: 99, evidence: { reason: 'rule_disabled', version: 2 } }]);
		for (let s = 6; s <= 20; s++) expect(engine.onFrame(frame(s, 0.1))).toEqual([]);
		engine.setRules({ lock_lost: { enabled: true, version: 3 } }, 100);
		for (let s = 21; s <= 24; s++) expect(engine.onFrame(frame(s, 0.1))).toEqual([]);
		expect(engine.onFrame(frame(25, 0.1))).toMatchObject([{ type: 'open', seq: 25, evidence: { version: 3 } }]);
	});

	it('a stricter rule applies from the next frame on', () => {
		const engine = new DetectorEngine({}, run);
		for (let s = 1; s <= 3; s++) engine.onFrame(frame(s, 0.45));
		engine.setRules({ lock_lost: { threshold: 0.4, version: 2 } }, 0);
		expect(engine.onFrame(frame(4, 0.45))).toEqual([]);
		expect(engine.rules.lock_lost.threshold).toBe(0.4);
	});
});

describe('bad input', () => {
	it('a frame without a proper seq or time is refused with the field named', () => {
		const engine = new DetectorEngine({}, run);
		expect(() => engine.onFrame({ ...frame(1, 0.9), seq: 0 })).toThrow(/frame\.seq/);
		expect(() => engine.onFrame({ ...frame(1, 0.9), t: Number.NaN })).toThrow(/t must be a finite number/);
		expect(() => engine.onClock(Number.POSITIVE_INFINITY)).toThrow(/now_ms/);
	});

	it('a damaged snapshot is refused with the field named', () => {
		const snap = new DetectorEngine({}, run).snapshot();
		expect(() => DetectorEngine.restore({ ...snap, format: 9 })).toThrow(/detector snapshot: format/);
		expect(() => DetectorEngine.restore({ ...snap, detectors: { ...snap.detectors, lock_lost: { low: 1 } } })).toThrow(
			/detectors\.lock_lost\.low/
		);
		expect(() => DetectorEngine.restore(null)).toThrow(/detector snapshot/);
	});

	it('a run without its number of states is refused', () => {
		expect(() => new DetectorEngine({}, {} as never)).toThrow(/run\.states/);
	});
});
