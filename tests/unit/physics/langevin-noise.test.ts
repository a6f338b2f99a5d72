// Noise normalisation of the Langevin simulator: the undriven oscillator's stationary variance.
import { beforeAll, describe, expect, it } from 'vitest';
import { noiseStrength, simulatePath, type SamplePath } from '$lib/physics/langevin';
import type { ModelParams } from '$lib/physics/model';

describe('stationary fluctuations without drive', () => {
	// dα = −(γ + iδ)α dt + √D dW with ⟨dW dW*⟩ = dt is a complex Ornstein–Uhlenbeck process:
	// d⟨|α|²⟩/dt = −2γ⟨|α|²⟩ + D, so ⟨|α|²⟩ = D/(2γ), whatever δ (the rotation does not change the
	// radius), with ⟨x²⟩ = ⟨y²⟩ = D/(4γ) and ⟨α²⟩ = 0 (standard OU result, e.g. Gardiner, Handbook of
	// Stochastic Methods, sec. 4.5.4, from memory). With D = γλ(2n̄+1) that is λ(n̄ + ½), the
	// symmetrised thermal occupation in units of λ.
	const params: ModelParams = { order: 3, detuning: 0.7, damping: 0.5, drive: 0, nonlinearity: { kind: 'kerr', K: 0 } };
	const lambda = 0.2;
	const noiseFactor = 3; // n̄ = 1
	let path: SamplePath;
	beforeAll(() => {
		path = simulatePath(params, { lambda, noiseFactor, duration: 20_000, seed: 5, recordEvery: 5 });
	});

	it('uses D = γλ(2n̄+1)', () => {
		expect(noiseStrength(params, lambda, noiseFactor)).toBeCloseTo(0.5 * 0.2 * 3, 15);
	});

	it('settles at ⟨|α|²⟩ = λ(n̄ + ½), isotropically', () => {
		let sxx = 0;
		let syy = 0;
		let sxy = 0;
		const n = path.x.length;
		for (let i = 0; i < n; i++) {
			sxx += path.x[i] ** 2;
			syy += path.y[i] ** 2;
			sxy += path.x[i] * path.y[i];
		}
		const expected = lambda * (1 + 0.5); // = D/(2γ) = 0.3
		// |α|² is exponentially distributed (relative spread 1) with correlation time 1/(2γ) = 1,
		// so 20 000 time units hold about 10⁴ independent samples: standard error ≈ 1 %. Allow 4 %.
		expect(Math.abs((sxx + syy) / n - expected) / expected).toBeLessThan(0.04);
		expect(Math.abs(sxx - syy) / (sxx + syy)).toBeLessThan(0.05);
		expect(Math.abs(sxy) / (sxx + syy)).toBeLessThan(0.03);
	});
});
