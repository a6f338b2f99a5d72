// Reconnect delays: exponential growth with jitter and a ceiling (common practice for clients that
// retry a shared server), checked against the sequence computed here independently.
import { describe, expect, test } from 'vitest';
import { createBackoff } from '../../../agent/backoff.ts';

describe('createBackoff', () => {
	test('doubles from 0.5 s to a 30 s ceiling, each delay jittered within [base/2, base]', () => {
		const b = createBackoff(); // defaults of the brief: 0.5 s doubling, 30 s max, half jitter
		const bases = [500, 1000, 2000, 4000, 8000, 16000, 30000, 30000, 30000];
		for (const base of bases) {
			const d = b.next();
			expect(d).toBeGreaterThan(base / 2 - 1e-9);
			expect(d).toBeLessThanOrEqual(base);
		}
	});

	test('the extremes of the random source give the ends of the interval', () => {
		const low = createBackoff({ random: () => 0 });
		const high = createBackoff({ random: () => 0.999999 });
		// random 0 → no reduction: 500, 1000, 2000; random → 1 → half of that.
		expect([low.next(), low.next(), low.next()]).toEqual([500, 1000, 2000]);
		const h = [high.next(), high.next(), high.next()];
		[250, 500, 1000].forEach((v, i) => expect(h[i]).toBeCloseTo(v, 2));
	});

	test('reset returns to the first delay (after a welcome)', () => {
		const b = createBackoff({ random: () => 0 });
		b.next();
		b.next();
		b.next();
		expect(b.attempt).toBe(3);
		b.reset();
		expect(b.next()).toBe(500);
	});

	test('jitter spreads many clients over the interval', () => {
		// Seeded linear congruential source (Numerical Recipes constants, from memory).
		let x = 12345;
		const random = () => (x = (1664525 * x + 1013904223) >>> 0) / 2 ** 32;
		const firsts = Array.from({ length: 200 }, () => createBackoff({ random }).next());
		expect(Math.min(...firsts)).toBeLessThan(300);
		expect(Math.max(...firsts)).toBeGreaterThan(450);
	});

	test('bad settings are refused with a message', () => {
		expect(() => createBackoff({ initialMs: 0 })).toThrow(/initialMs/);
		expect(() => createBackoff({ initialMs: 100, maxMs: 50 })).toThrow(/maxMs/);
		expect(() => createBackoff({ jitter: 2 })).toThrow(/jitter/);
	});
});
