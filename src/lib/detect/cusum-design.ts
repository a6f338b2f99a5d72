// Decision intervals of rate_drift's two-sided Poisson CUSUM, from the false-alarm budget.
//
// A Poisson CUSUM step for a window with predicted count μ adds k·ln ρ − μ(ρ − 1) (Lucas 1985).
// Its in-control run length for a given h depends on μ — strongly at high counts, where the same
// h lasts far longer (at ρ = 2 the h for a run length of 5·10⁶ steps is 13.4 at μ = 20 but 7.4 at
// μ = 100) — and the predicted count per step moves with the fridge temperature and the dwell
// time, so one h for the whole run would spend the budget at the wrong pace. Designs are made on
// a grid of μ, eight points per octave (μ_j = 2^(j/8)), each with the h whose in-control run
// length, for steps of that μ, equals the budget; a step uses h interpolated linearly in ln μ
// between the two grid points either side of its own predicted count (designAt), so h follows
// the actual counts per step rather than the nearest band. Between grid points the interpolated
// h keeps the run length within about 1 % of the target below one count per step; above a few
// counts per step the run length at constant μ is itself a step function of μ and h (a count is
// a large jump), which no choice of h smooths, and it scatters by ±30 % around the target.
//
// Windows whose predicted counts are small are pooled into one step until the pooled prediction
// reaches `minExpectedPerStep` (a step of a tenth of a switch carries almost no information). A
// design is made for a grid point of the step's predicted count, the number of windows the step
// pooled and the window length: its target run length in steps is the budget in windows of that
// length divided by the windows per step, so a change of window_s mid-run changes the target.
// The run lengths are exact (stats/cusum.ts follows the chain's own states, no lattice).
//
// The two sides share the budget: each side's target is twice the two-sided one, since
// 1/ARL ≈ 1/ARL⁺ + 1/ARL⁻ for rare alarms (the relation Lucas & Crosier 1982 give for two
// one-sided CUSUMs). Steps of more than MU_STEP_MAX predicted counts use the design at
// MU_STEP_MAX, which is conservative there: h only falls as the count per step grows.
import { z } from 'zod';
import { poissonCusumDecisionInterval } from '../stats/cusum';
import { budgetWindows } from './budget';

export const BANDS_PER_OCTAVE = 8;
export const MU_STEP_MAX = 4096;
/** A pooled step never spans more windows than this; a rate too slow to fill one gives no steps. */
export const MAX_WINDOWS_PER_STEP = 10_000;
/** The smallest target run length in steps a design accepts. */
const MIN_TARGET_STEPS = 20;

export const cusumDesignSchema = z.object({
	/** Grid point of the step's predicted count, μ = 2^(band/8) (for an interpolated design, the nearest). */
	band: z.number().int(),
	windowsPerStep: z.number().int().min(1),
	/** Predicted count per step the decision intervals are for. */
	muStep: z.number(),
	/** In-control average run length of each side, in steps. */
	targetStepsPerSide: z.number(),
	hUp: z.number(),
	hDown: z.number()
});
export type CusumDesign = z.infer<typeof cusumDesignSchema>;

export type DesignInputs = {
	ratioUp: number;
	ratioDown: number;
	minExpectedPerStep: number;
	falseAlarmEvery_days: number;
	/** Length of the step's windows, which the budget is counted in. */
	window_s: number;
};

export function bandOf(muStep: number): number {
	return Math.round(BANDS_PER_OCTAVE * Math.log2(muStep));
}

export const designKey = (band: number, windowsPerStep: number, window_s: number) => `${band}:${windowsPerStep}:${window_s}`;

/** Pure and not free (a bisection on the run length, milliseconds to a tenth of a second), so results are remembered across engines. */
const memo = new Map<string, CusumDesign>();

function decisionInterval(target: number, rho: number, mu: number): number {
	try {
		return poissonCusumDecisionInterval(target, rho, mu);
	} catch (e) {
		// Only when even the smallest h outlasts the target (a tiny budget for large steps): one
		// count's worth of evidence is then the least the chart can ask for.
		if (e instanceof RangeError && /already gives/.test(e.message)) return Math.abs(Math.log(rho));
		throw e;
	}
}

export function designFor(band: number, windowsPerStep: number, inputs: DesignInputs): CusumDesign {
	const key = [
		band,
		windowsPerStep,
		inputs.ratioUp,
		inputs.ratioDown,
		inputs.minExpectedPerStep,
		inputs.falseAlarmEvery_days,
		inputs.window_s
	].join('|');
	const known = memo.get(key);
	if (known) return known;
	const muStep = Math.min(MU_STEP_MAX, 2 ** (band / BANDS_PER_OCTAVE));
	const targetStepsPerSide = Math.max(MIN_TARGET_STEPS, (2 * budgetWindows(inputs.window_s, inputs.falseAlarmEvery_days)) / windowsPerStep);
	const design: CusumDesign = {
		band,
		windowsPerStep,
		muStep,
		targetStepsPerSide,
		hUp: decisionInterval(targetStepsPerSide, inputs.ratioUp, muStep),
		hDown: decisionInterval(targetStepsPerSide, inputs.ratioDown, muStep)
	};
	memo.set(key, design);
	return design;
}

/**
 * The design for a step of predicted count muStep: the decision intervals interpolated linearly in
 * ln μ between the grid designs either side (the one design when muStep lies on the grid).
 * `grid` supplies a grid design by band, so that a caller can keep the ones it has used.
 */
export function designAt(
	muStep: number,
	windowsPerStep: number,
	inputs: DesignInputs,
	grid: (band: number) => CusumDesign = (band) => designFor(band, windowsPerStep, inputs)
): CusumDesign {
	if (!(muStep > 0) || !Number.isFinite(muStep)) throw new RangeError(`muStep must be a finite count > 0, got ${muStep}`);
	const position = BANDS_PER_OCTAVE * Math.log2(Math.min(muStep, MU_STEP_MAX));
	const below = Math.floor(position + 1e-9);
	const t = Math.max(0, position - below);
	const low = grid(below);
	if (t < 1e-9) return { ...low, muStep };
	const high = grid(below + 1);
	return {
		band: bandOf(muStep),
		windowsPerStep,
		muStep,
		targetStepsPerSide: low.targetStepsPerSide,
		hUp: (1 - t) * low.hUp + t * high.hUp,
		hDown: (1 - t) * low.hDown + t * high.hDown
	};
}
