// The hand-edit form of a setup's rate model: text fields ⇄ the object the rate-model API takes,
// checked with the same schema as the server (rateModelSchema).
import type { z } from 'zod';
import { rateModelSchema } from '$lib/physics/rate-model-schema';

export type Process = 'switching' | 'escape';

/** A rate model as GET /api/setups/:id/rate-model returns it: the model plus who saved it and when. */
export type SavedRateModel = z.output<typeof rateModelSchema> & { savedAt: string; savedBy: string | null };

export interface RateModelHistoryRow {
	id: number | string;
	process: Process;
	model: Omit<SavedRateModel, 'savedAt' | 'savedBy'>;
	note: string | null;
	createdAt: string;
	createdBy: string | null;
}

export type RateDraft = Record<string, string>;

export const RATE_FIELDS: { key: string; label: string; unit?: string; hint: string; optional?: boolean; escapeOnly?: boolean }[] = [
	{ key: 'W0_per_s', label: 'W₀', unit: 's⁻¹', hint: 'Attempt rate: the rate the activation law tends to when noise is large.' },
	{ key: 'W0_sigma', label: 'σ(ln W₀)', unit: '≈ relative', hint: 'Uncertainty of ln W₀ (0.2 ≈ 20 %). Leave empty if unknown.', optional: true },
	{ key: 'A', label: 'Activation exponent A', hint: 'W = W₀·exp(−A / (2n̄ + 1)), n̄ the mode’s thermal occupation.' },
	{ key: 'A_sigma', label: 'σ(A)', hint: 'Uncertainty of A. Leave empty if unknown.', optional: true },
	{ key: 'mode_GHz', label: 'Mode frequency', unit: 'GHz', hint: 'Sets n̄ at each temperature.' },
	{ key: 'nominal_mK', label: 'Nominal temperature', unit: 'mK', hint: 'Used for windows that carry no mixing-chamber temperature.' },
	{ key: 'ref_detuning', label: 'Reference detuning δ', hint: 'Operating point A refers to; escape scales as (γ² + δ²)/ε².', optional: true, escapeOnly: true },
	{ key: 'ref_damping', label: 'Reference damping γ', hint: 'Same unit as δ and ε.', optional: true, escapeOnly: true },
	{ key: 'ref_drive', label: 'Reference drive ε', hint: 'Leave all three empty for none.', optional: true, escapeOnly: true }
];

const text = (v: number | undefined) => (typeof v === 'number' && Number.isFinite(v) ? String(v) : '');

/** Starting values: the saved model, else the setup's mode and nominal temperature. */
export function rateDraft(model: SavedRateModel | null, setup: { modeGHz: number; nominalMK: number }): RateDraft {
	return {
		W0_per_s: text(model?.W0_per_s),
		W0_sigma: text(model?.W0_sigma),
		A: text(model?.A),
		A_sigma: text(model?.A_sigma),
		mode_GHz: text(model?.mode_GHz ?? setup.modeGHz),
		nominal_mK: text(model?.nominal_mK ?? setup.nominalMK),
		ref_detuning: text(model?.reference?.detuning),
		ref_damping: text(model?.reference?.damping),
		ref_drive: text(model?.reference?.drive),
		note: ''
	};
}

export function rateDraftFromForm(form: FormData): RateDraft {
	const draft: RateDraft = {};
	for (const f of RATE_FIELDS) draft[f.key] = String(form.get(f.key) ?? '');
	draft.note = String(form.get('note') ?? '');
	return draft;
}

/**
 * The body of PUT /api/setups/:id/rate-model for a draft, or the fields that are wrong. A hand
 * edit is a new model (source manual): a fitted range from an earlier calibration does not carry over.
 */
export function rateModelFromDraft(process: Process, draft: RateDraft): { body: Record<string, unknown> | null; issues: Record<string, string> } {
	const issues: Record<string, string> = {};
	const num = (key: string, optional = false): number | undefined => {
		const t = (draft[key] ?? '').trim().replace(/\u2212/g, '-');
		if (t === '') {
			if (!optional) issues[key] = 'enter a number';
			return undefined;
		}
		const n = Number(t);
		if (!Number.isFinite(n)) issues[key] = `“${t}” is not a number`;
		return n;
	};
	const body: Record<string, unknown> = {
		process,
		W0_per_s: num('W0_per_s'),
		A: num('A'),
		mode_GHz: num('mode_GHz'),
		nominal_mK: num('nominal_mK'),
		source: 'manual'
	};
	const W0_sigma = num('W0_sigma', true);
	const A_sigma = num('A_sigma', true);
	if (W0_sigma !== undefined) body.W0_sigma = W0_sigma;
	if (A_sigma !== undefined) body.A_sigma = A_sigma;
	if (process === 'escape') {
		const ref = { detuning: num('ref_detuning', true), damping: num('ref_damping', true), drive: num('ref_drive', true) };
		const given = Object.values(ref).filter((v) => v !== undefined).length;
		if (given === 3) body.reference = ref;
		else if (given > 0) {
			for (const [k, v] of Object.entries(ref)) if (v === undefined) issues[`ref_${k}`] = 'give all three, or none';
		}
	}
	const note = (draft.note ?? '').trim();
	if (note) body.note = note;
	if (Object.keys(issues).length === 0) {
		const parsed = rateModelSchema.safeParse(body);
		if (!parsed.success) {
			for (const issue of parsed.error.issues) {
				const path = issue.path.map(String);
				const key = path[0] === 'reference' ? `ref_${path[1] ?? 'detuning'}` : (path[0] ?? 'W0_per_s');
				if (!(key in issues)) issues[key] = issue.message;
			}
		}
	}
	return { body: Object.keys(issues).length ? null : body, issues };
}

/** The field an API message names ("W0_per_s: …", "reference.damping: …"), or null. */
export function rateMessageField(message: string): { field: string | null; text: string } {
	const m = /^([A-Za-z_][\w.]*)\s*:\s*(.+)$/s.exec(message.trim());
	if (!m) return { field: null, text: message };
	const [head, sub] = m[1].split('.');
	const field = head === 'reference' ? `ref_${sub ?? 'detuning'}` : head;
	return RATE_FIELDS.some((f) => f.key === field) || field === 'note' ? { field, text: m[2] } : { field: null, text: message };
}
