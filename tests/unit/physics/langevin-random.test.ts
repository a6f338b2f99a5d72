// The simulators' random numbers: xoshiro128** against the published algorithm, the ziggurat
// normals against the normal distribution, and reproducibility from a seed.
import { describe, expect, it } from 'vitest';
import jStat from 'jstat';
import { Rng, createRng, deriveSeed } from '$lib/physics/random';

/**
 * xoshiro128** as published by Blackman & Vigna (2018, reference C code xoshiro128starstar.c),
 * written with BigInt and explicit 32-bit masks, independently of the Math.imul version.
 */
function referenceXoshiro(state: bigint[], n: number): number[] {
	const M = 0xffffffffn;
	const rotl = (x: bigint, k: bigint) => ((x << k) | (x >> (32n - k))) & M;
	const s = state.map((w) => w & M);
	const out: number[] = [];
	for (let i = 0; i < n; i++) {
		const result = (rotl((s[1] * 5n) & M, 7n) * 9n) & M;
		const t = (s[1] << 9n) & M;
		s[2] ^= s[0];
		s[3] ^= s[1];
		s[1] ^= s[2];
		s[0] ^= s[3];
		s[2] ^= t;
		s[3] = rotl(s[3], 11n);
		out.push(Number(result));
	}
	return out;
}

describe('xoshiro128**', () => {
	it.each([
		[1, 2, 3, 4],
		[0xdeadbeef, 0x01234567, 0x89abcdef, 0xfedcba98],
		[0x80000000, 0xffffffff, 1, 0]
	])('matches the reference algorithm from state (%i, %i, %i, %i)', (a, b, c, d) => {
		const rng = Rng.fromState([a, b, c, d]);
		const ours = Array.from({ length: 1000 }, () => rng.nextUint32());
		expect(ours).toEqual(referenceXoshiro([a, b, c, d].map(BigInt), 1000));
	});

	it('gives 11520 first from state (1, 2, 3, 4): rotl(2·5, 7)·9 by hand', () => {
		expect(Rng.fromState([1, 2, 3, 4]).nextUint32()).toBe(11520);
	});

	it('refuses the all-zero state', () => {
		expect(() => Rng.fromState([0, 0, 0, 0])).toThrow(/all zero/);
	});
});

describe('seeding', () => {
	it('same seed → same numbers; different seeds → different numbers', () => {
		const draw = (seed: number | string) => {
			const r = createRng(seed);
			return [r.nextUint32(), r.nextFloat(), r.nextGaussian(), r.nextGaussian()];
		};
		expect(draw(12345)).toEqual(draw(12345));
		expect(draw('run-a')).toEqual(draw('run-a'));
		expect(draw(12345)).not.toEqual(draw(12346));
		expect(draw('run-a')).not.toEqual(draw('run-b'));
		expect(draw(1)).not.toEqual(draw(2 ** 32 + 1));
	});

	it('derives distinct, reproducible child seeds', () => {
		const seeds = Array.from({ length: 2000 }, (_, i) => deriveSeed(99, i));
		expect(new Set(seeds).size).toBe(seeds.length);
		expect(deriveSeed(99, 17)).toBe(seeds[17]);
		expect(() => deriveSeed(99, -1)).toThrow(/non-negative integer/);
		expect(() => createRng(Number.NaN)).toThrow(/seed must be a finite number/);
	});
});

describe('uniforms', () => {
	it('nextFloat is uniform on [0, 1) (chi-square over 50 bins)', () => {
		// Pearson's chi-square goodness of fit (NIST/SEMATECH e-Handbook 1.3.5.15), p from jstat.
		const rng = createRng(2024);
		const bins = new Array(50).fill(0);
		const n = 200_000;
		let outside = 0;
		for (let i = 0; i < n; i++) {
			const u = rng.nextFloat();
			if (!(u >= 0 && u < 1)) outside++;
			else bins[Math.floor(u * 50)]++;
		}
		expect(outside).toBe(0);
		const e = n / 50;
		const chi2 = bins.reduce((s, o) => s + (o - e) ** 2 / e, 0);
		expect(1 - jStat.chisquare.cdf(chi2, 49)).toBeGreaterThan(1e-3);
	});
});

describe('ziggurat normals', () => {
	const n = 1_000_000;
	const rng = createRng('normals');
	const xs = new Float64Array(n);
	for (let i = 0; i < n; i++) xs[i] = rng.nextGaussian();

	it('have mean 0, variance 1 and kurtosis 3 within sampling error', () => {
		let m1 = 0;
		let m2 = 0;
		let m4 = 0;
		for (const x of xs) {
			m1 += x;
			m2 += x * x;
			m4 += x ** 4;
		}
		m1 /= n;
		m2 /= n;
		m4 /= n;
		// Standard errors of the sample moments of N(0,1): √(1/n), √(2/n), √(96/n) (E x⁸ − 9 = 96).
		expect(Math.abs(m1)).toBeLessThan(4 / Math.sqrt(n));
		expect(Math.abs(m2 - 1)).toBeLessThan(4 * Math.sqrt(2 / n));
		expect(Math.abs(m4 - 3)).toBeLessThan(4 * Math.sqrt(96 / n));
	});

	it('follow the normal distribution (chi-square over 60 bins of width 0.15 across ±4.5)', () => {
		// Bin probabilities from jstat's normal cdf, a library independent of the generator.
		const edges = Array.from({ length: 61 }, (_, i) => -4.5 + 0.15 * i);
		const counts = new Array(62).fill(0); // [−∞, −4.5), 60 bins, [4.5, ∞)
		for (const x of xs) {
			const k = x < -4.5 ? 0 : x >= 4.5 ? 61 : 1 + Math.min(59, Math.floor((x + 4.5) / 0.15));
			counts[k]++;
		}
		const cdf = (x: number) => jStat.normal.cdf(x, 0, 1);
		const probs = [cdf(-4.5), ...edges.slice(1).map((b, i) => cdf(b) - cdf(edges[i])), 1 - cdf(4.5)];
		// Merge the two outer tails into their neighbours to keep expected counts ≥ 5.
		const obs = [counts[0] + counts[1], ...counts.slice(2, 60), counts[60] + counts[61]];
		const exp = [probs[0] + probs[1], ...probs.slice(2, 60), probs[60] + probs[61]].map((p) => p * n);
		const chi2 = obs.reduce((s, o, i) => s + (o - exp[i]) ** 2 / exp[i], 0);
		expect(1 - jStat.chisquare.cdf(chi2, obs.length - 1)).toBeGreaterThan(1e-3);
	});

	it('put the right mass in the tail beyond the ziggurat base R = 3.4426', () => {
		// P(|X| > R) = 2(1 − Φ(R)); the tail is drawn by a separate branch (Marsaglia's rejection).
		const R = 3.442619855899;
		const expected = 2 * (1 - jStat.normal.cdf(R, 0, 1)) * n;
		const expected4 = 2 * (1 - jStat.normal.cdf(4, 0, 1)) * n;
		let tail = 0;
		let beyond4 = 0;
		for (const x of xs) {
			if (Math.abs(x) > R) tail++;
			if (Math.abs(x) > 4) beyond4++;
		}
		// Poisson counts: within 4 standard deviations.
		expect(Math.abs(tail - expected)).toBeLessThan(4 * Math.sqrt(expected));
		expect(Math.abs(beyond4 - expected4)).toBeLessThan(4 * Math.sqrt(expected4));
	});
});
