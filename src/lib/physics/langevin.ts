// Quasi-classical Langevin simulation of the rotating-frame model (model.ts): escape from the
// vacuum, switching among the phase states, λ sweeps, and a 1-D overdamped mode for Kramers.
//
// Equation (Itô = Stratonovich here, the noise being additive):
//
//   dα = F(α) dt + √D dW,   D = γ·λ·(2n̄+1),   dW = (dW₁ + i dW₂)/√2,
//
// with F the drift of model.ts, dW₁, dW₂ independent real Wiener increments (variance dt each),
// so ⟨dW dW*⟩ = dt and ⟨dW dW⟩ = 0; each quadrature x, y receives √(D/2) dWᵢ. In this
// normalisation an undriven, undetuned oscillator settles at ⟨|α|²⟩ = D/(2γ) = λ(n̄ + ½): the
// symmetrised thermal value for [α, α†] = λ, which is what makes λ the dimensionless
// fluctuation parameter (effective Planck constant) and the noise fluctuation–dissipation
// consistent. noiseFactor is 2n̄+1, supplied by the caller (occupation.ts computes it).
//
// Stepping: stochastic Heun (predictor–corrector trapezoid), which for additive noise is of
// weak order 2 (Kloeden & Platen, Numerical Solution of SDEs, 1992, from memory; Greiner,
// Strittmatter & Honerkamp 1988, J. Stat. Phys. 51, 95, from memory). The step is
// dt = safety / max|μ| with μ the Jacobian eigenvalues at all fixed points (the fastest local
// relaxation or rotation rate of the flow), safety = 0.05 by default, so the deterministic part
// is resolved to better than 1e-4 per step at the fastest point; callers may pass dt.
//
// Rates are counts over exposure (the Poisson maximum-likelihood rate, censored trajectories
//
// The pieces, one file each: langevin-run.ts (progress, cancellation, drivers), langevin-stepper.ts
// (the Heun stepper and time step), langevin-escape.ts, langevin-switching.ts, langevin-sweep.ts,
// langevin-path.ts and langevin-1d.ts. This module gathers their public names.
export { SimulationCancelled, runCooperatively, runToCompletion, type RateInterval, type Run, type RunControl } from './langevin-run';
export { HeunStepper, chooseTimeStep, fastestRate, noiseStrength, type NoiseOptions } from './langevin-stepper';
export * from './langevin-escape';
export * from './langevin-switching';
export * from './langevin-sweep';
export * from './langevin-path';
export * from './langevin-1d';
