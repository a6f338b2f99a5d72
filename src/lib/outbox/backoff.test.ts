import { describe, expect, it } from 'vitest';
import { DEFAULT_BACKOFF, retryDelay_ms } from './backoff';

describe('retryDelay_ms', () => {
	it('doubles the window with each failure, between half and all of it', () => {
		const policy = { base_ms: 1000, cap_ms: 60_000 };
		expect(retryDelay_ms(1, policy, () => 0)).toBe(500);
		expect(retryDelay_ms(1, policy, () => 1)).toBe(1000);
		expect(retryDelay_ms(3, policy, () => 0)).toBe(2000);
		expect(retryDelay_ms(3, policy, () => 1)).toBe(4000);
	});

	it('never waits longer than the cap, however many failures', () => {
		expect(retryDelay_ms(500, DEFAULT_BACKOFF, () => 1)).toBe(DEFAULT_BACKOFF.cap_ms);
	});

	it('spreads rows that failed together', () => {
		const draws = [0.1, 0.9];
		const a = retryDelay_ms(4, DEFAULT_BACKOFF, () => draws[0]);
		const b = retryDelay_ms(4, DEFAULT_BACKOFF, () => draws[1]);
		expect(b - a).toBeGreaterThan(10_000);
	});

	it('refuses a count of attempts that is not a whole number from 1', () => {
		expect(() => retryDelay_ms(0)).toThrow(/attempts/);
		expect(() => retryDelay_ms(1.5)).toThrow(/attempts/);
	});
});
