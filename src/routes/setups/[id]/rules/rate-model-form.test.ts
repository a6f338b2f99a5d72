// Checks of the rate-model hand-edit form against the stored model's schema (rate-model-schema.ts),
// the reference the API validates with: each problem comes back as an issue on its own field.
import { describe, expect, it } from 'vitest';
import { superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { rateModelSchema } from '$lib/physics/rate-model-schema';
import { rateDraft, rateFormSchema, rateModelFromDraft, type RateDraft } from './rate-model-form';

const setup = { modeGHz: 5.1, nominalMK: 12 };
const draft = (process: 'switching' | 'escape', change: Partial<RateDraft> = {}): RateDraft => ({
	...rateDraft(process, null, setup),
	W0_per_s: '0.002',
	A: '40',
	...change
});

describe('rate model form', () => {
	it('gives the model the API schema accepts, entered by hand, with the note apart', () => {
		const parsed = rateFormSchema.safeParse(draft('switching', { W0_sigma: '0.2', note: ' refit ' }));
		expect(parsed.success).toBe(true);
		const { model, note } = rateModelFromDraft(parsed.data!);
		expect(rateModelSchema.parse(model)).toEqual(model);
		expect(model).toEqual({ process: 'switching', W0_per_s: 0.002, A: 40, W0_sigma: 0.2, mode_GHz: 5.1, nominal_mK: 12, source: 'manual' });
		expect(note).toBe('refit');
	});

	it('names each bad field with the stored schema’s own message, as data', async () => {
		const expected = rateModelSchema.safeParse({ process: 'switching', W0_per_s: -3, A: 40, mode_GHz: 5, nominal_mK: 12 });
		const message = expected.error!.issues.find((i) => i.path[0] === 'W0_per_s')!.message;
		const form = await superValidate(draft('switching', { W0_per_s: '-3', A: 'forty', mode_GHz: '' }), zod4(rateFormSchema));
		expect(form.valid).toBe(false);
		// A field that is no number is named as such; the others still get the stored schema's check.
		expect(form.errors).toEqual({ W0_per_s: [message], A: ['“forty” is not a number'], mode_GHz: ['enter a number'] });
	});

	it('puts a reference operating-point problem on its own input, and wants all three or none', async () => {
		const partial = await superValidate(draft('escape', { ref_detuning: '0.1' }), zod4(rateFormSchema));
		expect(partial.errors).toEqual({ ref_damping: ['give all three, or none'], ref_drive: ['give all three, or none'] });
		// rate-model-schema.ts: damping must be positive.
		const negative = await superValidate(draft('escape', { ref_detuning: '0', ref_damping: '-1', ref_drive: '0.3' }), zod4(rateFormSchema));
		expect(negative.errors).toEqual({ ref_damping: ['damping must be positive'] });
	});
});
