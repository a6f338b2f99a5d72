// The noise sweep's settings: as typed, their defaults, and their checks (λ values, trajectories, times, seed).
import { z } from 'zod';
import { collectErrors, integerField, NUMBER, numberField, type ParseResult } from './number-text';

export interface SweepForm {
	process: 'escape' | 'switching';
	lambdas: string;
	trajectories: string;
	maxTime: string;
	duration: string;
	seed: string;
}
export type SweepField = keyof SweepForm;

/** Modest defaults: a few seconds in a browser worker on a slow machine. */
export const DEFAULT_SWEEP: SweepForm = {
	process: 'escape',
	lambdas: '0.4, 0.3, 0.25, 0.2',
	trajectories: '40',
	maxTime: '2000',
	duration: '1000',
	seed: '1'
};

export interface SweepValues {
	process: 'escape' | 'switching';
	lambdas: number[];
	trajectories: number;
	maxTime: number;
	duration: number;
	seed: number;
}

const sweepSchema = z.object({
	process: z.enum(['escape', 'switching'], { message: 'Choose escape or switching' }),
	lambdas: z.string().transform((s, ctx) => {
		const parts = s
			.split(/[,;\s]+/)
			.map((p) => p.trim())
			.filter(Boolean);
		const values: number[] = [];
		for (const p of parts) {
			const x = Number(p);
			if (!NUMBER.test(p) || !(x > 0) || x > 5) {
				ctx.addIssue({ code: 'custom', message: `λ values must be numbers between 0 and 5; "${p}" is not` });
				return z.NEVER;
			}
			values.push(x);
		}
		if (values.length < 2 || values.length > 8) {
			ctx.addIssue({ code: 'custom', message: 'Give 2 to 8 λ values, separated by commas' });
			return z.NEVER;
		}
		if (new Set(values).size < 2) {
			ctx.addIssue({ code: 'custom', message: 'The λ values must not all be equal: the fit needs a spread in 1/λ' });
			return z.NEVER;
		}
		return values;
	}),
	trajectories: integerField('Trajectories', 1, 2000),
	maxTime: numberField('Time limit').pipe(z.number().gt(0, 'Time limit must be positive').max(1e6, 'Time limit must be at most 10⁶')),
	duration: numberField('Duration').pipe(z.number().gt(0, 'Duration must be positive').max(1e6, 'Duration must be at most 10⁶')),
	seed: integerField('Seed', 0, 2 ** 31 - 1)
});

export function parseSweepForm(form: SweepForm): ParseResult<SweepValues, SweepField> {
	const parsed = sweepSchema.safeParse(form);
	if (!parsed.success) return { ok: false, errors: collectErrors<SweepField>(parsed.error) };
	return { ok: true, value: parsed.data };
}
