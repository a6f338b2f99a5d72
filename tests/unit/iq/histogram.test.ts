// Summed IQ histograms and the lobes found in them. The lobe test builds its histogram from
// Gaussian blobs placed by hand at the angles 2πk/K where the K phase states of a parametric
// oscillator driven at K times its frequency sit (each state advanced by 2π/K from the last), and
// checks the simulated agent's histograms (agent/simulate.ts) show K lobes at those angles.
import { describe, expect, it } from 'vitest';
import { binCentre, lobeCentres, sumIq, type IqHistogram } from '../../../src/lib/iq/histogram';
import { createSimulator } from '../../../agent/simulate';

function blobs(K: number, bins: number, extent: number, amp: number, sigma: number, perLobe: number, vacuum = 0): IqHistogram {
	const counts = new Array<number>(bins * bins).fill(0);
	for (let row = 0; row < bins; row++) {
		for (let col = 0; col < bins; col++) {
			const { i, q } = binCentre({ bins, extent }, col, row);
			let density = vacuum * Math.exp(-(i * i + q * q) / (2 * sigma * sigma));
			for (let k = 0; k < K; k++) {
				const a = (2 * Math.PI * k) / K;
				density += perLobe * Math.exp(-((i - amp * Math.cos(a)) ** 2 + (q - amp * Math.sin(a)) ** 2) / (2 * sigma * sigma));
			}
			counts[row * bins + col] = Math.round(density);
		}
	}
	return { bins, extent, counts };
}

const angleGap = (a: number, b: number) => Math.abs(Math.atan2(Math.sin(a - b), Math.cos(a - b)));

describe('sumIq', () => {
	it('adds bin by bin and counts frames', () => {
		const a = { bins: 2, extent: 1, counts: [1, 2, 3, 4] };
		const b = { bins: 2, extent: 1, counts: [10, 0, 5, 1] };
		expect(sumIq([a, null, b])).toEqual({ bins: 2, extent: 1, counts: [11, 2, 8, 5], frames: 2, mismatched: 0, total: 26 });
		expect(a.counts).toEqual([1, 2, 3, 4]);
	});

	it('leaves out histograms on another grid and says how many', () => {
		const s = sumIq([
			{ bins: 2, extent: 1, counts: [1, 1, 1, 1] },
			{ bins: 3, extent: 1, counts: new Array(9).fill(1) },
			{ bins: 2, extent: 2, counts: [5, 5, 5, 5] }
		]);
		expect(s).toMatchObject({ frames: 1, mismatched: 2, total: 4 });
	});

	it('refuses a histogram whose counts do not fill its grid, naming the sizes', () => {
		expect(() => sumIq([{ bins: 3, extent: 1, counts: [1, 2] }])).toThrow(/3 bins a side must have 9 counts, got 2/);
	});

	it('nothing to sum is null', () => {
		expect(sumIq([])).toBeNull();
	});
});

describe('lobeCentres', () => {
	for (const K of [2, 3, 4, 6]) {
		it(`finds ${K} lobes at 2πk/${K} and their amplitude, past a vacuum blob`, () => {
			const h = blobs(K, 48, 6, 4, 0.5, 200, 300);
			const lobes = lobeCentres(h, K);
			expect(lobes).toHaveLength(K);
			for (const l of lobes) {
				expect(angleGap(l.angle_rad, (2 * Math.PI * l.state) / K)).toBeLessThan(0.05);
				expect(Math.hypot(l.i, l.q)).toBeGreaterThan(3.7);
				expect(Math.hypot(l.i, l.q)).toBeLessThan(4.3);
			}
		});
	}

	it('the simulated agent’s histograms, summed, show its K lobes at 2πk/K', () => {
		for (const states of [3, 6]) {
			const sim = createSimulator({ seed: 11, startMs: 0, order: 3, states, iqBins: 24, loseLockAtMin: 100, switchRate_per_s: 1 });
			const sum = sumIq(Array.from({ length: 120 }, () => sim.next().iq))!;
			expect(sum.frames).toBe(120);
			const lobes = lobeCentres(sum, states);
			for (const l of lobes) {
				expect(l.counts).toBeGreaterThan(0);
				expect(angleGap(l.angle_rad, (2 * Math.PI * l.state) / states)).toBeLessThan(0.15);
			}
		}
	});
});
