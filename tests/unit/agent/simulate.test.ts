// The simulated run: reproducible from its seed, valid on the wire, locked (lock ≈ 0.93) outside the
// lock-loss window and lost (lock < 0.5) inside it, with counts, times and transitions that agree.
import { describe, expect, test } from 'vitest';
import { checkFrameAgainstRun, frameSchema, type Frame } from '../../../src/lib/protocol/index.ts';
import { createSimulator, simulateFrames } from '../../../agent/simulate.ts';

const startMs = 1_780_000_000_000;
const base = { seed: 42, startMs, shots: 500, loseLockAtMin: 1, lockLossMin: 1.5 };
const sum = (xs: number[]) => xs.reduce((a, b) => a + b, 0);
const mean = (xs: number[]) => sum(xs) / xs.length;
const sd = (xs: number[]) => Math.sqrt(mean(xs.map((x) => (x - mean(xs)) ** 2)));

// Five simulated minutes, one window a second: locked 0–1 min, lost 1–2.5 min, locked again after.
const run: Frame[] = [...simulateFrames({ ...base, count: 300 })];
// Window i covers (i, i+1] s; it is in the loss interval when its middle is in [60, 150) s.
const lostAt = (f: Frame) => {
	const mid_s = (f.t - startMs) / 1000 - f.window_s / 2;
	return mid_s >= 60 && mid_s < 150;
};
const locked = run.filter((f) => !lostAt(f));
const lost = run.filter(lostAt);

describe('simulateFrames', () => {
	test('the same seed gives the same run; another seed another run', () => {
		expect([...simulateFrames({ ...base, count: 120 })]).toEqual(run.slice(0, 120));
		const other = [...simulateFrames({ ...base, seed: 43, count: 120 })];
		expect(other).not.toEqual(run.slice(0, 120));
	});

	test('every frame passes the wire schema and the run checks (K = 6), with an IQ histogram too', () => {
		for (const f of [...run, ...simulateFrames({ ...base, count: 20, iqBins: 16 })]) {
			const parsed = frameSchema.safeParse(f);
			expect(parsed.success).toBe(true);
			expect(checkFrameAgainstRun(parsed.data!, 6)).toBeNull();
		}
	});

	test('seq goes up by one from startSeq and t by the window length', () => {
		const resumed = [...simulateFrames({ ...base, count: 5, startSeq: 101, window_s: 2 })];
		expect(resumed.map((f) => f.seq)).toEqual([101, 102, 103, 104, 105]);
		expect(resumed.map((f) => f.t - startMs)).toEqual([2000, 4000, 6000, 8000, 10000]);
		run.forEach((f, i) => expect(f.seq).toBe(i + 1));
	});

	test('lock is about 0.93 ± 0.02 when locked and below 0.5 throughout the loss', () => {
		expect(lost).toHaveLength(90);
		expect(locked).toHaveLength(210);
		// Gaussian phase noise δ: |⟨e^{iKδ}⟩| = exp(−K²σ²/2) (characteristic function of the normal
		// distribution); the brief asks for 0.93 ± 0.02 locked and about 0.2 lost.
		expect(mean(locked.map((f) => f.lock))).toBeGreaterThan(0.91);
		expect(mean(locked.map((f) => f.lock))).toBeLessThan(0.95);
		expect(sd(locked.map((f) => f.lock))).toBeLessThan(0.035);
		expect(Math.min(...locked.map((f) => f.lock))).toBeGreaterThan(0.8);
		expect(Math.max(...lost.map((f) => f.lock))).toBeLessThan(0.5);
		expect(mean(lost.map((f) => f.lock))).toBeGreaterThan(0.1);
		expect(mean(lost.map((f) => f.lock))).toBeLessThan(0.3);
	});

	test('losing lock spreads the counts over the states and raises the vacuum fraction', () => {
		const topShare = (f: Frame) => Math.max(...f.counts) / Math.max(1, sum(f.counts));
		const vacFrac = (f: Frame) => f.vacuum / f.shots;
		expect(mean(locked.map(topShare))).toBeGreaterThan(0.9);
		// Uniform over 6 states would give 1/6; a window of fast diffusion comes close to it.
		expect(mean(lost.map(topShare))).toBeLessThan(0.45);
		expect(mean(locked.map(vacFrac))).toBeLessThan(0.05);
		expect(mean(lost.map(vacFrac))).toBeGreaterThan(4 * mean(locked.map(vacFrac)));
	});

	test('counts, dwell times and transitions of each window agree', () => {
		for (const f of run) {
			expect(f.vacuum + sum(f.counts)).toBe(f.shots);
			expect(f.dwell_s + f.vacuum_s).toBeCloseTo(f.window_s, 5);
			expect(sum(f.transitions!)).toBe(f.switches);
			for (let k = 0; k < 6; k++) expect(f.transitions![k * 6 + k]).toBe(0);
			// Shots sample the window at even spacing: each entry into or exit from vacuum can shift the
			// shot fraction away from the time fraction by at most one shot.
			const bound = (2 * f.escapes + 2) / f.shots;
			expect(Math.abs(sum(f.counts) / f.shots - f.dwell_s / f.window_s)).toBeLessThanOrEqual(bound + 1e-9);
		}
	});

	test('switching while locked is Poisson at the configured rate, mostly to a neighbour', () => {
		const rate_per_s = 0.5;
		const frames = [...simulateFrames({ ...base, seed: 7, count: 600, lockLossMin: 0, switchRate_per_s: rate_per_s })];
		const n = sum(frames.map((f) => f.switches));
		const exposure_s = sum(frames.map((f) => f.dwell_s));
		// Poisson counting: |n − λT| < 4√(λT) fails by chance with probability about 6e-5.
		const expected = rate_per_s * exposure_s;
		expect(Math.abs(n - expected)).toBeLessThan(4 * Math.sqrt(expected));
		let neighbour = 0;
		for (const f of frames) {
			for (let from = 0; from < 6; from++) {
				neighbour += f.transitions![from * 6 + ((from + 1) % 6)] + f.transitions![from * 6 + ((from + 5) % 6)];
			}
		}
		// The model sends 80 % of switches to a neighbour; binomial sd at n ≈ 300 is about 0.023.
		expect(Math.abs(neighbour / n - 0.8)).toBeLessThan(0.1);
	});

	test('aux carries the mixing-chamber temperature near 12 mK and the pump power', () => {
		const mxc = run.map((f) => f.aux!.mxc_mK);
		expect(Math.abs(mean(mxc) - 12)).toBeLessThan(0.3);
		expect(Math.max(...mxc.map((t) => Math.abs(t - 12)))).toBeLessThan(1);
		expect(run.every((f) => typeof f.aux!.pump_dBm === 'number')).toBe(true);
	});

	test('the lock-loss interval is in simulated minutes', () => {
		const sim = createSimulator({ ...base, loseLockAtMin: 2, lockLossMin: 0.5 });
		expect(sim.isLockLost(119.9)).toBe(false);
		expect(sim.isLockLost(120)).toBe(true);
		expect(sim.isLockLost(149.9)).toBe(true);
		expect(sim.isLockLost(150)).toBe(false);
	});

	test('inconsistent options are refused by name', () => {
		expect(() => createSimulator({ ...base, order: 3, states: 5 })).toThrow(/states/);
		expect(() => createSimulator({ ...base, window_s: 0 })).toThrow(/window_s/);
		expect(() => createSimulator({ ...base, startSeq: 0 })).toThrow(/startSeq/);
	});
});
