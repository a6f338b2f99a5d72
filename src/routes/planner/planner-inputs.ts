// The rate planner's operating point: field-by-field zod checks with messages, the defaults, and the
// URL query that lets a planner view be shared. The sweep's settings are in sweep-inputs.ts.
import { z } from 'zod';
import type { DriveOrder, ModelParams } from '$lib/physics/model';
import { collectErrors, numberField, type ParseResult } from './number-text';

// The planner's page and tests take all its inputs from here.
export { DEFAULT_SWEEP, parseSweepForm, type SweepField, type SweepForm, type SweepValues } from './sweep-inputs';
export type { ParseResult } from './number-text';

/**
 * The unit every rate of the rotating-frame model (δ, γ, ε, K, η) is entered in. They are angular
 * rates; the simulation's time is the inverse of this unit, so a simulated rate in model units
 * times `per_s` is a rate in s⁻¹.
 */
export const RATE_UNITS = {
	per_us: { label: 'µs⁻¹ (10⁶ s⁻¹)', short: 'µs⁻¹', per_s: 1e6, time: '1 µs' },
	per_ns: { label: 'ns⁻¹ (10⁹ s⁻¹)', short: 'ns⁻¹', per_s: 1e9, time: '1 ns' },
	two_pi_MHz: { label: '2π × MHz (enter γ/2π in MHz)', short: '2π MHz', per_s: 2 * Math.PI * 1e6, time: '1/(2π) µs ≈ 159 ns' },
	two_pi_kHz: { label: '2π × kHz (enter γ/2π in kHz)', short: '2π kHz', per_s: 2 * Math.PI * 1e3, time: '1/(2π) ms ≈ 159 µs' }
} as const;
export type RateUnit = keyof typeof RATE_UNITS;
const UNIT_KEYS = Object.keys(RATE_UNITS) as [RateUnit, ...RateUnit[]];

/** The operating-point form as typed: strings, so a half-typed number is kept as it is. */
export interface PlannerForm {
	order: string;
	detuning: string;
	damping: string;
	drive: string;
	kind: 'kerr' | 'junction';
	K: string;
	eta: string;
	mode_GHz: string;
	T_mK: string;
	compare_mK: string;
	lambdaQ: string;
	unit: RateUnit;
}
export type PlannerField = keyof PlannerForm;

export interface PlannerValues {
	params: ModelParams;
	mode_GHz: number;
	T_mK: number;
	compare_mK: number;
	/** λ_q, the setup's own quantum fluctuation parameter (dimensionless). */
	lambdaQ: number;
	unit: RateUnit;
	/** One model rate unit in s⁻¹. */
	unit_per_s: number;
}

/**
 * A period-tripling Kerr point where the vacuum and three phase states coexist and a short sweep
 * sees every trajectory escape (the parameters of the simulator's own escape tests).
 */
export const DEFAULT_FORM: PlannerForm = {
	order: '3',
	detuning: '0',
	damping: '1',
	drive: '0.333',
	kind: 'kerr',
	K: '0.157',
	eta: '-0.02',
	mode_GHz: '5',
	T_mK: '12',
	compare_mK: '100',
	lambdaQ: '0.05',
	unit: 'per_us'
};

const formSchema = z
	.object({
		order: z.enum(['2', '3', '4'], { message: 'Order M must be 2, 3 or 4' }).transform((v) => Number(v) as DriveOrder),
		detuning: numberField('Detuning δ'),
		damping: numberField('Damping γ').pipe(z.number().gt(0, 'Damping γ must be positive: it sets the noise')),
		drive: numberField('Drive ε').pipe(z.number().gt(0, 'Drive ε must be positive (its phase sets the phase origin)')),
		kind: z.enum(['kerr', 'junction'], { message: 'Choose Kerr or junction-type' }),
		K: z.string(),
		eta: z.string(),
		mode_GHz: numberField('Mode frequency f').pipe(
			z.number().gt(0, 'Mode frequency f must be positive').max(100, 'Mode frequency f must be at most 100 GHz')
		),
		T_mK: numberField('Temperature T').pipe(
			z.number().min(0, 'Temperature T must not be negative').max(4000, 'Temperature T must be at most 4000 mK')
		),
		compare_mK: numberField('Compare-at temperature').pipe(
			z.number().min(0, 'Compare-at temperature must not be negative').max(4000, 'Compare-at temperature must be at most 4000 mK')
		),
		lambdaQ: numberField('λ_q').pipe(z.number().gt(0, 'λ_q must be positive').max(10, 'λ_q must be at most 10')),
		unit: z.enum(UNIT_KEYS, { message: 'Choose a rate unit' })
	})
	.superRefine((v, ctx) => {
		// Only the nonlinearity in use is checked, so a stale value in the other field does not block.
		const which = v.kind === 'kerr' ? 'K' : 'eta';
		const label = v.kind === 'kerr' ? 'Kerr K' : 'Junction term η';
		const parsed = numberField(label).safeParse(v[which]);
		if (!parsed.success) {
			ctx.addIssue({ code: 'custom', path: [which], message: parsed.error.issues[0].message });
		} else if (v.kind === 'junction' && parsed.data === 0) {
			ctx.addIssue({ code: 'custom', path: ['eta'], message: 'Junction term η must not be zero (use Kerr instead)' });
		}
	});

/** Checks the operating-point form; every bad field gets its own message. */
export function parsePlannerForm(form: PlannerForm): ParseResult<PlannerValues, PlannerField> {
	const parsed = formSchema.safeParse(form);
	if (!parsed.success) return { ok: false, errors: collectErrors<PlannerField>(parsed.error) };
	const v = parsed.data;
	const params: ModelParams = {
		order: v.order,
		detuning: v.detuning,
		damping: v.damping,
		drive: v.drive,
		nonlinearity: v.kind === 'kerr' ? { kind: 'kerr', K: Number(v.K) } : { kind: 'junction', eta: Number(v.eta) }
	};
	return {
		ok: true,
		value: {
			params,
			mode_GHz: v.mode_GHz,
			T_mK: v.T_mK,
			compare_mK: v.compare_mK,
			lambdaQ: v.lambdaQ,
			unit: v.unit,
			unit_per_s: RATE_UNITS[v.unit].per_s
		}
	};
}

// ------------------------------------------------------------------ the shareable query

/** Query keys of each form field (short, so a shared link stays readable). */
export const QUERY_KEYS: Record<PlannerField, string> = {
	order: 'M',
	detuning: 'delta',
	damping: 'gamma',
	drive: 'eps',
	kind: 'nl',
	K: 'K',
	eta: 'eta',
	mode_GHz: 'f',
	T_mK: 'T',
	compare_mK: 'T2',
	lambdaQ: 'lq',
	unit: 'unit'
};

/** The form from a URL query, defaults for what it lacks; values are checked later, not here. */
export function formFromQuery(query: URLSearchParams, base: PlannerForm = DEFAULT_FORM): PlannerForm {
	const form = { ...base };
	for (const [field, key] of Object.entries(QUERY_KEYS) as [PlannerField, string][]) {
		const v = query.get(key);
		if (v === null) continue;
		if (field === 'kind') form.kind = v === 'junction' ? 'junction' : 'kerr';
		else if (field === 'unit') form.unit = (UNIT_KEYS as string[]).includes(v) ? (v as RateUnit) : base.unit;
		else form[field] = v.slice(0, 40);
	}
	return form;
}

/**
 * The query for a form: the setup when one is chosen, and only the fields that differ from base
 * (the defaults, or what the setup fills in), so that formFromQuery(q, base) gives the form back.
 */
export function queryFromForm(form: PlannerForm, setupId: string | null, base: PlannerForm = DEFAULT_FORM): URLSearchParams {
	const q = new URLSearchParams();
	if (setupId) q.set('setup', setupId);
	for (const [field, key] of Object.entries(QUERY_KEYS) as [PlannerField, string][]) {
		if (form[field] !== base[field]) q.set(key, String(form[field]));
	}
	return q;
}

/** What a setup decides: M, the mode frequency, the base temperature, and K = M or 2M states. */
export function formForSetup(form: PlannerForm, setup: { order: number; states: number; modeGHz: number; nominalMK: number }): PlannerForm {
	const order = setup.order === 2 || setup.order === 3 || setup.order === 4 ? String(setup.order) : form.order;
	return {
		...form,
		order,
		kind: setup.states === 2 * setup.order ? 'junction' : 'kerr',
		mode_GHz: String(setup.modeGHz),
		T_mK: String(setup.nominalMK)
	};
}
