// The replay page's progress bar: a fraction only while a replay of the run is known to run.
import { describe, expect, it } from 'vitest';
import { progressFraction } from '../../../src/routes/runs/[id]/replay/replay-view';

describe('progressFraction', () => {
	it('is done over total while running, clamped to 0..1', () => {
		expect(progressFraction({ running: true, done: 5000, total: 20_000 })).toBe(0.25);
		// An open run can store more frames while it is replayed than it had at the start: never over 1.
		expect(progressFraction({ running: true, done: 21_000, total: 20_000 })).toBe(1);
	});

	it('is null with nothing to measure: no answer yet, not running, or an empty run', () => {
		expect(progressFraction(null)).toBeNull();
		expect(progressFraction({ running: false, done: 0, total: 20_000 })).toBeNull();
		expect(progressFraction({ running: true, done: 0, total: 0 })).toBeNull();
	});
});
