// lock_lost against its definition in the product spec (issue 2, item 6, and the rule defaults of
// the detector brief): N consecutive low windows open, clearWindows consecutive good windows clear.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { DetectorEngine, defaultRules, type DetectorEvent } from '../../../src/lib/detect';
import { checkFrameAgainstRun, frameSchema, type Frame } from '../../../src/lib/protocol/frame';
import { frame, frames, K, repeat } from './frames';

const run = { states: K };
const feed = (engine: DetectorEngine, fs: Frame[]) => fs.flatMap((f) => engine.onFrame(f));
const only = (events: DetectorEvent[], type: DetectorEvent['type']) => events.filter((e) => e.type === type);

describe('test frames', () => {
	it('are valid wire-protocol frames for a six-state run', () => {
		for (const f of [frame(1, 0.9), frame(2, 0, { shots: 0 })]) {
			expect(frameSchema.safeParse(f).success).toBe(true);
			expect(checkFrameAgainstRun(f, K)).toBeNull();
		}
	});
});

describe('lock_lost opening', () => {
	it('opens once, at exactly the N-th consecutive low window (spec: N = 5 by default)', () => {
		const engine = new DetectorEngine({}, run);
		const seen = frames(1, [0.9, 0.9, ...repeat(0.3, 4)]).map((f) => engine.onFrame(f));
		expect(seen.flat()).toEqual([]);
		const fifth = engine.onFrame(frame(7, 0.3));
		expect(fifth).toHaveLength(1);
		expect(fifth[0]).toMatchObject({ type: 'open', kind: 'lock_lost', severity: 'critical', seq: 7, at_ms: frame(7, 0).t });
	});

	it('carries the last values against the threshold, the rule, its version and the window count', () => {
		const engine = new DetectorEngine({ lock_lost: { version: 3 } }, run);
		const events = feed(engine, frames(1, [0.45, 0.4, 0.35, 0.3, 0.2]));
		const open = events[0];
		expect(open.type).toBe('open');
		expect(open.evidence).toMatchObject({ rule: 'lock_lost', version: 3, threshold: 0.5, windows: 5, count: 5 });
		expect(open.evidence.values).toEqual([0.45, 0.4, 0.35, 0.3, 0.2].map((lock, i) => ({ seq: i + 1, t_ms: frame(i + 1, 0).t, lock })));
		if (open.type === 'open') expect(open.summary).toContain('0.50');
	});

	it('does not open while a good window interrupts the streak', () => {
		const engine = new DetectorEngine({}, run);
		expect(feed(engine, frames(1, [...repeat(0.2, 4), 0.55, ...repeat(0.2, 4)]))).toEqual([]);
	});

	it('treats the threshold itself as not low (lock < threshold is low)', () => {
		const engine = new DetectorEngine({}, run);
		expect(feed(engine, frames(1, repeat(0.5, 20)))).toEqual([]);
	});

	it('opens on a single frame when windows = 1, and a single frame alone does nothing by default', () => {
		expect(new DetectorEngine({ lock_lost: { windows: 1 } }, run).onFrame(frame(1, 0.1))).toMatchObject([{ type: 'open', seq: 1 }]);
		expect(new DetectorEngine({}, run).onFrame(frame(1, 0.1))).toEqual([]);
		expect(new DetectorEngine({ lock_lost: { windows: 1 } }, run).onFrame(frame(1, 0.9))).toEqual([]);
	});

	it('does not open again while open, whatever follows', () => {
		const engine = new DetectorEngine({}, run);
		const events = feed(engine, frames(1, [...repeat(0.3, 5), ...repeat(0.1, 50), ...repeat(0.6, 50), ...repeat(0.2, 50)]));
		expect(only(events, 'open')).toHaveLength(1);
		expect(only(events, 'clear')).toHaveLength(0);
		expect(engine.openConditions()).toMatchObject([{ kind: 'lock_lost', openedSeq: 5 }]);
	});

	it('updates the evidence only when a new lowest value appears', () => {
		const engine = new DetectorEngine({}, run);
		const events = feed(engine, frames(1, [...repeat(0.3, 5), 0.4, 0.25, 0.28, 0.1, 0.2]));
		const updates = only(events, 'update');
		expect(updates.map((u) => u.evidence.lowest)).toEqual([
			{ seq: 7, t_ms: frame(7, 0).t, lock: 0.25 },
			{ seq: 9, t_ms: frame(9, 0).t, lock: 0.1 }
		]);
	});
});

describe('lock_lost clearing with hysteresis', () => {
	const lost = () => {
		const engine = new DetectorEngine({}, run);
		feed(engine, frames(1, repeat(0.2, 5)));
		return engine;
	};

	it('does not clear on values between threshold and clearThreshold', () => {
		const engine = lost();
		expect(only(feed(engine, frames(6, repeat(0.69, 200))), 'clear')).toEqual([]);
		expect(engine.openConditions()).toHaveLength(1);
	});

	it('clears at exactly the clearWindows-th consecutive window at or above clearThreshold', () => {
		const engine = lost();
		// four good, one in the hysteresis band (resets), then five good: clears on the last one
		const locks = [...repeat(0.8, 4), 0.6, ...repeat(0.7, 4), 0.95];
		const events = feed(engine, frames(6, locks));
		const clears = only(events, 'clear');
		expect(clears).toHaveLength(1);
		expect(clears[0]).toMatchObject({ kind: 'lock_lost', seq: 5 + locks.length });
		expect(clears[0].evidence).toMatchObject({ rule: 'lock_lost', clearThreshold: 0.7, clearWindows: 5, count: 5 });
		expect(clears[0].evidence.lowest).toMatchObject({ lock: 0.2 });
		expect(engine.openConditions()).toEqual([]);
	});

	it('opens again after a clear, counting afresh', () => {
		const engine = lost();
		feed(engine, frames(6, repeat(0.9, 5)));
		const second = feed(engine, frames(11, repeat(0.1, 5)));
		expect(second).toMatchObject([{ type: 'open', seq: 15 }]);
	});

	it('honours other thresholds (threshold 0.3, clear 0.4, 2 and 3 windows)', () => {
		const engine = new DetectorEngine({ lock_lost: { threshold: 0.3, windows: 2, clearThreshold: 0.4, clearWindows: 3 } }, run);
		const events = feed(engine, frames(1, [0.35, 0.29, 0.29, 0.39, 0.4, 0.4, 0.4]));
		expect(events.filter((e) => e.type !== 'update').map((e) => [e.type, e.seq])).toEqual([
			['open', 3],
			['clear', 7]
		]);
	});
});

describe('lock_lost edge cases', () => {
	it('a gap in seq is not low lock: low windows either side of it still count as consecutive', () => {
		const engine = new DetectorEngine({}, run);
		expect(feed(engine, [frame(1, 0.2), frame(2, 0.2), frame(40, 0.2), frame(41, 0.2)])).toEqual([]);
		expect(engine.onFrame(frame(42, 0.2))).toMatchObject([{ type: 'open', seq: 42 }]);
	});

	it('a gap in seq between good windows raises nothing', () => {
		const engine = new DetectorEngine({}, run);
		expect(feed(engine, [frame(1, 0.9), frame(2, 0.9), frame(500, 0.9), frame(501, 0.9)])).toEqual([]);
	});

	it('windows with no phase-state shots neither extend nor reset a low streak', () => {
		const engine = new DetectorEngine({}, run);
		const empty = (seq: number) => frame(seq, 0, { shots: 0 });
		const events = feed(engine, [frame(1, 0.2), frame(2, 0.2), empty(3), empty(4), frame(5, 0.2), frame(6, 0.2)]);
		expect(events).toEqual([]);
		const open = engine.onFrame(frame(7, 0.2));
		expect(open).toMatchObject([{ type: 'open', seq: 7 }]);
		expect(open[0].evidence).toMatchObject({ count: 5, skippedWindows: 2 });
	});

	it('windows with no phase-state shots never open on their own, even with lock 0', () => {
		const engine = new DetectorEngine({}, run);
		expect(
			feed(
				engine,
				Array.from({ length: 100 }, (_, i) => frame(i + 1, 0, { shots: 0 }))
			)
		).toEqual([]);
	});

	it('a window with shots only in the vacuum state is also empty of lock information', () => {
		const engine = new DetectorEngine({ lock_lost: { windows: 1 } }, run);
		const vacuumOnly: Frame = { ...frame(1, 0), counts: repeat(0, K), vacuum: 600 };
		expect(engine.onFrame(vacuumOnly)).toEqual([]);
	});

	it('windows with no phase-state shots do not break a recovery', () => {
		const engine = new DetectorEngine({}, run);
		feed(engine, frames(1, repeat(0.2, 5)));
		const recovery = [...frames(6, repeat(0.9, 3)), frame(9, 0, { shots: 0 }), ...frames(10, repeat(0.9, 2))];
		const events = feed(engine, recovery);
		expect(events).toMatchObject([{ type: 'clear', seq: 11 }]);
	});

	it('a repeated or older seq is ignored', () => {
		const engine = new DetectorEngine({}, run);
		feed(engine, frames(1, repeat(0.2, 4)));
		expect(engine.onFrame(frame(4, 0.2))).toEqual([]);
		expect(engine.onFrame(frame(2, 0.2))).toEqual([]);
		expect(engine.onFrame(frame(5, 0.2))).toMatchObject([{ type: 'open', seq: 5 }]);
	});
});

/**
 * The definition read literally, written independently of the detector: a condition opens at
 * window i when, among the informative windows since the last change, the last N are all below
 * threshold; it clears when the last M are all at or above clearThreshold.
 */
function reference(locks: (number | null)[], N: number, thr: number, M: number, clr: number) {
	const out: ['open' | 'clear', number][] = [];
	let open = false;
	let since = 0;
	locks.forEach((lock, i) => {
		if (lock === null) return;
		const informative = locks.slice(since, i + 1).filter((x): x is number => x !== null);
		const need = open ? M : N;
		const tail = informative.slice(-need);
		if (tail.length === need && tail.every((x) => (open ? x >= clr : x < thr))) {
			out.push([open ? 'clear' : 'open', i + 1]);
			open = !open;
			since = i + 1;
		}
	});
	return out;
}

describe('lock_lost against the definition read literally (property, seeded)', () => {
	it('opens and clears exactly where the reference does', () => {
		const lockValue = fc.oneof(fc.constant(null), fc.double({ min: 0, max: 1, noNaN: true }), fc.constantFrom(0.5, 0.7));
		fc.assert(
			fc.property(
				fc.array(lockValue, { maxLength: 120 }),
				fc.integer({ min: 1, max: 6 }),
				fc.integer({ min: 1, max: 6 }),
				(locks, N, M) => {
					const engine = new DetectorEngine({ lock_lost: { windows: N, clearWindows: M } }, run);
					const events = locks.flatMap((lock, i) => engine.onFrame(lock === null ? frame(i + 1, 0, { shots: 0 }) : frame(i + 1, lock)));
					const got = events.filter((e) => e.type !== 'update').map((e) => [e.type, e.seq]);
					expect(got).toEqual(reference(locks, N, 0.5, M, 0.7));
				}
			),
			{ seed: 20_240_601, numRuns: 300 }
		);
	});
});

describe('lock_lost rule defaults', () => {
	it('match the brief: threshold 0.5, 5 windows, clear at 0.7 for 5 windows, version 1', () => {
		expect(defaultRules().lock_lost).toEqual({
			enabled: true,
			version: 1,
			threshold: 0.5,
			windows: 5,
			clearThreshold: 0.7,
			clearWindows: 5
		});
	});
});
