// Decision intervals of rate_drift's two-sided Poisson CUSUM, from the false-alarm budget.
//
// A Poisson CUSUM step for a window with predicted count μ adds k·ln ρ − μ(ρ − 1) (Lucas 1985).
// Its in-control run length for a given h depends on μ, and the predicted count per window moves
// with the fridge temperature and the dwell time, so one h for the whole run would spend the
// budget faster when the rate is higher. The design is therefore made per band of μ: bands a
// quarter of an octave wide (μ_j = 2^(j/4)), each with the h whose in-control run length, for
// steps of that μ, equals the budget. A step uses the h of its band: the chart keeps to the
// budget per unit time as the rate moves, to within the band's width.
//
// Windows whose predicted counts are small are pooled into one step until the pooled prediction
// reaches `minExpectedPerStep`: the Markov-chain run lengths (Brook & Evans 1972, as implemented
// in stats/cusum.ts) are accurate for μ of about 0.3 and more per step and drift for much smaller
// μ, and a step of a tenth of a switch carries almost no information anyway. A design is made for
// a band of the step's predicted count and the number of windows the step pooled: its target run
// length in steps is the budget in windows divided by the windows per step.
//
// The two sides share the budget: each side's target is twice the two-sided one, since
// 1/ARL ≈ 1/ARL⁺ + 1/ARL⁻ for rare alarms (the relation Lucas & Crosier 1982 give for two
// one-sided CUSUMs). Steps of more than MU_STEP_MAX predicted counts use the design at
// MU_STEP_MAX: h hardly changes beyond a few counts per step, and the Markov chain grows costly.
import { z } from 'zod';
import { poissonCusumDecisionInterval } from '../stats/cusum';
import { budgetWindows } from './budget';

export const BANDS_PER_OCTAVE = 4;
export const MU_STEP_MAX = 20;
/** A pooled step never spans more windows than this; a rate too slow to fill one gives no steps. */
export const MAX_WINDOWS_PER_STEP = 10_000;
/** Lattice size of the Markov chain (run lengths within about 0.3 % of a finer lattice). */
const MAX_STATES = 300;
/** The smallest target run length in steps a design accepts. */
const MIN_TARGET_STEPS = 20;

export const cusumDesignSchema = z.object({
	/** Band of the step's predicted count: μ_step = 2^(band/4). */
	band: z.number().int(),
	windowsPerStep: z.number().int().min(1),
	/** Predicted count per step the run lengths were computed for. */
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
	/** Window length the budget is counted in (the run's frame rate). */
	window_s: number;
};

export function bandOf(muStep: number): number {
	return Math.round(BANDS_PER_OCTAVE * Math.log2(muStep));
}

export const designKey = (band: number, windowsPerStep: number) => `${band}:${windowsPerStep}`;

/** Pure and costly (tens to hundreds of ms), so results are remembered across engines. */
const memo = new Map<string, CusumDesign>();

function decisionInterval(target: number, rho: number, mu: number): number {
	try {
		return poissonCusumDecisionInterval(target, rho, mu, { maxStates: MAX_STATES });
	} catch (e) {
		// Only when even the smallest h outlasts the target (a tiny budget for large steps): one
		// count's worth of evidence is then the least the chart can ask for.
		if (e instanceof RangeError && /already gives/.test(e.message)) return Math.abs(Math.log(rho));
		throw e;
	}
}

export function designFor(band: number, windowsPerStep: number, inputs: DesignInputs): CusumDesign {
	const key = [band, windowsPerStep, inputs.ratioUp, inputs.ratioDown, inputs.minExpectedPerStep, inputs.falseAlarmEvery_days, inputs.window_s].join('|');
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
