// The hand-edit form of a setup's rate model: its fields as typed (text, so a half-typed number stays
// as it is), one zod schema for browser and server (superforms) whose check builds the model and
// validates it with rateModelSchema, each problem on its own field.
import { z } from 'zod';
import { safeText } from '$lib/protocol/safe-text';
import { rateModelSchema, type RateModelInput } from '$lib/physics/rate-model-schema';

export type Process = 'switching' | 'escape';

/** A rate model as the page shows it: the model plus who saved it and when. */
export type SavedRateModel = z.output<typeof rateModelSchema> & { savedAt: string | Date; savedBy: string | null };

export interface RateModelHistoryRow {
	id: number | string;
	process: Process;
	model: Omit<SavedRateModel, 'savedAt' | 'savedBy'>;
	note: string | null;
	createdAt: string | Date;
	createdBy: string | null;
}

export const RATE_FIELDS = [
	{ key: 'W0_per_s', label: 'W₀', unit: 's⁻¹', hint: 'Attempt rate: the rate the activation law tends to when noise is large.' },
	{
		key: 'W0_sigma',
		label: 'σ(ln W₀)',
		unit: '≈ relative',
		hint: 'Uncertainty of ln W₀ (0.2 ≈ 20 %). Leave empty if unknown.',
		optional: true
	},
	{ key: 'A', label: 'Activation exponent A', hint: 'W = W₀·exp(−A / (2n̄ + 1)), n̄ the mode’s thermal occupation.' },
	{ key: 'A_sigma', label: 'σ(A)', hint: 'Uncertainty of A. Leave empty if unknown.', optional: true },
	{ key: 'mode_GHz', label: 'Mode frequency', unit: 'GHz', hint: 'Sets n̄ at each temperature.' },
	{ key: 'nominal_mK', label: 'Nominal temperature', unit: 'mK', hint: 'Used for windows that carry no mixing-chamber temperature.' },
	{
		key: 'ref_detuning',
		label: 'Reference detuning δ',
		hint: 'Operating point A refers to; escape scales as (γ² + δ²)/ε².',
		optional: true,
		escapeOnly: true
	},
	{ key: 'ref_damping', label: 'Reference damping γ', hint: 'Same unit as δ and ε.', optional: true, escapeOnly: true },
	{ key: 'ref_drive', label: 'Reference drive ε', hint: 'Leave all three empty for none.', optional: true, escapeOnly: true }
] as const satisfies { key: string; label: string; unit?: string; hint: string; optional?: boolean; escapeOnly?: boolean }[];

export type RateField = (typeof RATE_FIELDS)[number]['key'];
export type RateDraft = Record<RateField, string> & { process: Process; note: string };

/** A model's body from the draft, and the fields whose text is no number or an incomplete reference. */
function buildModel(draft: RateDraft): { model: RateModelInput; issues: [RateField, string][] } {
	const issues: [RateField, string][] = [];
	const num = (key: RateField, optional = false): number | undefined => {
		const t = (draft[key] ?? '').trim().replace(/\u2212/g, '-');
		if (t === '') {
			if (!optional) issues.push([key, 'enter a number']);
			return undefined;
		}
		const n = Number(t);
		if (!Number.isFinite(n)) issues.push([key, `“${t}” is not a number`]);
		return n;
	};
	// A hand edit is a new model (source manual): a fitted range from a calibration does not carry over.
	const model: RateModelInput = {
		process: draft.process,
		W0_per_s: num('W0_per_s') as number,
		A: num('A') as number,
		mode_GHz: num('mode_GHz') as number,
		nominal_mK: num('nominal_mK') as number,
		source: 'manual'
	};
	const W0_sigma = num('W0_sigma', true);
	const A_sigma = num('A_sigma', true);
	if (W0_sigma !== undefined) model.W0_sigma = W0_sigma;
	if (A_sigma !== undefined) model.A_sigma = A_sigma;
	if (draft.process === 'escape') {
		const ref = { detuning: num('ref_detuning', true), damping: num('ref_damping', true), drive: num('ref_drive', true) };
		const given = Object.values(ref).filter((v) => v !== undefined).length;
		if (given === 3) model.reference = ref as RateModelInput['reference'];
		else if (given > 0) {
			for (const [k, v] of Object.entries(ref)) if (v === undefined) issues.push([`ref_${k}` as RateField, 'give all three, or none']);
		}
	}
	return { model, issues };
}

/** The form field of a rateModelSchema issue path (`reference.damping` → ref_damping). */
function fieldOfPath(path: readonly PropertyKey[]): RateField {
	if (path[0] === 'reference') return `ref_${String(path[1] ?? 'detuning')}` as RateField;
	return (path.length ? String(path[0]) : 'W0_per_s') as RateField;
}

const text = z.string().max(40, 'is too long for a number');

/** The form's schema, on both sides: each problem is an issue on its own field. */
export const rateFormSchema = z
	.object({
		process: z.enum(['switching', 'escape']),
		...(Object.fromEntries(RATE_FIELDS.map((f) => [f.key, text])) as Record<RateField, typeof text>),
		note: safeText(z.string().max(500, 'must be at most 500 characters'))
	})
	.superRefine((draft, ctx) => {
		const { model, issues } = buildModel(draft);
		const named = new Set<RateField>();
		for (const [path, message] of issues) {
			named.add(path);
			ctx.addIssue({ code: 'custom', path: [path], message });
		}
		// The other fields are checked even while one is empty; a field that is no number keeps that message.
		const parsed = rateModelSchema.safeParse(model);
		for (const issue of parsed.success ? [] : parsed.error.issues) {
			const field = fieldOfPath(issue.path);
			if (named.has(field)) continue;
			named.add(field);
			ctx.addIssue({ code: 'custom', path: [field], message: issue.message });
		}
	});

/** The model a valid draft stands for (after rateFormSchema accepted it), with the note apart. */
export function rateModelFromDraft(draft: RateDraft): { model: z.output<typeof rateModelSchema>; note: string | undefined } {
	const { model, issues } = buildModel(draft);
	if (issues.length) throw new RangeError(`rate model form: ${issues[0][0]}: ${issues[0][1]} (validate with rateFormSchema first)`);
	return { model: rateModelSchema.parse(model), note: draft.note.trim() || undefined };
}

const numberText = (v: number | undefined) => (typeof v === 'number' && Number.isFinite(v) ? String(v) : '');

/** Starting values: the saved model, else the setup's mode and nominal temperature. */
export function rateDraft(process: Process, model: SavedRateModel | null, setup: { modeGHz: number; nominalMK: number }): RateDraft {
	return {
		process,
		W0_per_s: numberText(model?.W0_per_s),
		W0_sigma: numberText(model?.W0_sigma),
		A: numberText(model?.A),
		A_sigma: numberText(model?.A_sigma),
		mode_GHz: numberText(model?.mode_GHz ?? setup.modeGHz),
		nominal_mK: numberText(model?.nominal_mK ?? setup.nominalMK),
		ref_detuning: numberText(model?.reference?.detuning),
		ref_damping: numberText(model?.reference?.damping),
		ref_drive: numberText(model?.reference?.drive),
		note: ''
	};
}

/** The superforms id of a process's form, so two cards on one page keep their own errors. */
export const rateFormId = (process: Process) => `rate-model-${process}`;
