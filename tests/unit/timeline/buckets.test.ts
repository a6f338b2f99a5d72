// Timeline sums against brute force over random frame streams with gaps: whatever the span and N,
// each bucket's sums equal the sums over the frames whose t lies in [from_ms, to_ms), whether the
// buckets were merged from stored rollups or aggregated from frames. The oracle loops over the
// frames directly and shares no code with plan.ts or buckets.ts.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { Frame } from '../../../src/lib/protocol/frame';
import { rollupFrames, ROLLUP_RESOLUTIONS_S } from '../../../src/lib/rollup/rollup';
import { bucketsFromRollups, type TimelineBucket } from '../../../src/lib/timeline/buckets';
import { planTimeline } from '../../../src/lib/timeline/plan';
import { streamArb, T0_MS } from '../rollup/streams';

const close = (a: number, b: number) => Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(b));

function checkAgainstFrames(bucket: TimelineBucket, inside: Frame[], expectedOf: (f: Frame) => { switches: number | null } | null) {
	const sum = (pick: (f: Frame) => number) => inside.reduce((s, f) => s + pick(f), 0);
	expect(bucket.frames).toBe(inside.length);
	expect(bucket.shots).toBe(sum((f) => f.shots));
	expect(bucket.vacuum).toBe(sum((f) => f.vacuum));
	expect(bucket.switches).toBe(sum((f) => f.switches));
	expect(bucket.escapes).toBe(sum((f) => f.escapes));
	expect(bucket.counts).toEqual(bucket.counts.map((_, i) => sum((f) => f.counts[i])));
	expect(
		close(
			bucket.dwell_s,
			sum((f) => f.dwell_s)
		)
	).toBe(true);
	expect(
		close(
			bucket.vacuum_s,
			sum((f) => f.vacuum_s)
		)
	).toBe(true);
	if (inside.length === 0) {
		expect(bucket.lock).toBeNull();
		expect(bucket.aux).toEqual({});
		expect(bucket.expected_switches).toBeNull();
		return;
	}
	const locks = inside.map((f) => f.lock);
	expect(bucket.lock!.min).toBe(Math.min(...locks));
	expect(bucket.lock!.max).toBe(Math.max(...locks));
	expect(close(bucket.lock!.mean, sum((f) => f.lock) / inside.length)).toBe(true);
	const names = [...new Set(inside.flatMap((f) => Object.keys(f.aux ?? {})))].sort();
	expect(Object.keys(bucket.aux).sort()).toEqual(names);
	for (const name of names) {
		const vs = inside.filter((f) => f.aux?.[name] !== undefined).map((f) => f.aux![name]);
		expect(bucket.aux[name].min).toBe(Math.min(...vs));
		expect(bucket.aux[name].max).toBe(Math.max(...vs));
		expect(close(bucket.aux[name].mean, vs.reduce((a, b) => a + b, 0) / vs.length)).toBe(true);
	}
	const predicted = inside.map((f) => expectedOf(f)?.switches ?? null).filter((v): v is number => v !== null);
	if (predicted.length === 0) expect(bucket.expected_switches).toBeNull();
	else
		expect(
			close(
				bucket.expected_switches!,
				predicted.reduce((a, b) => a + b, 0)
			)
		).toBe(true);
}

describe('timeline buckets', () => {
	it('sum exactly the frames whose t falls in each bucket, for random streams with gaps', () => {
		fc.assert(
			fc.property(
				streamArb(80),
				fc.integer({ min: -10_000, max: 20_000_000 }),
				fc.integer({ min: 1, max: 40_000_000 }),
				fc.integer({ min: 1, max: 400 }),
				(stream, offset, span, points) => {
					const expectedOf = (f: Frame) => stream.expected.get(f.seq) ?? null;
					const from = T0_MS + offset;
					const plan = planTimeline(from, from + span, points);
					let buckets: TimelineBucket[];
					if (plan.source === 'rollups') {
						// What the database holds: every resolution's rollups of the whole stream.
						const stored = rollupFrames(stream.frames, expectedOf, ROLLUP_RESOLUTIONS_S);
						buckets = bucketsFromRollups(
							stored.filter((r) => r.resolution_s === plan.rollup_s),
							plan,
							stream.states
						);
					} else {
						const read = stream.frames.filter((f) => f.t >= plan.from_ms && f.t < plan.to_ms);
						buckets = bucketsFromRollups(rollupFrames(read, expectedOf, [plan.width_s]), plan, stream.states);
					}
					expect(buckets.length).toBe(plan.count);
					expect(buckets.length).toBeLessThanOrEqual(points);
					expect(buckets[0].from_ms).toBeLessThanOrEqual(from);
					expect(buckets.at(-1)!.to_ms).toBeGreaterThanOrEqual(from + span);
					buckets.forEach((b, i) => {
						if (i > 0) expect(b.from_ms).toBe(buckets[i - 1].to_ms);
						const inside = stream.frames.filter((f) => Math.round(f.t) >= b.from_ms && Math.round(f.t) < b.to_ms);
						checkAgainstFrames(b, inside, expectedOf);
					});
				}
			),
			{ numRuns: 150 }
		);
	}, 60_000);

	it('refuses rollups that do not divide the bucket width', () => {
		const plan = planTimeline(T0_MS, T0_MS + 3_600_000 * 5, 100); // 180 s buckets from 60 s rows
		const rows = rollupFrames(
			[{ seq: 1, t: T0_MS, window_s: 1, shots: 1, vacuum: 0, counts: [1, 0], lock: 1, switches: 0, dwell_s: 1, escapes: 0, vacuum_s: 0 }],
			() => null,
			[600]
		);
		expect(() => bucketsFromRollups(rows, plan, 2)).toThrow(/600 s rollup cannot be split into 180 s buckets/);
	});
});
