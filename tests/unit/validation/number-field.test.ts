// A missing number in a shared schema is reported by the field's name, not as zod's
// "Invalid input: expected number, received NaN" (the message names the problem: house rule).
import { describe, expect, it } from 'vitest';
import { rateModelSchema } from '../../../src/lib/physics/rate-model-schema';
import { newSetupSchema } from '../../../src/lib/server/setups/service';

const model = { process: 'switching', W0_per_s: 2, A: 6, mode_GHz: 5, nominal_mK: 12 };
const messageFor = (input: Record<string, unknown>, field: string) =>
	rateModelSchema.safeParse(input).error?.issues.find((i) => i.path[0] === field)?.message;

describe('number fields of the rate model', () => {
	it('an absent or NaN mode_GHz is "mode_GHz is required"', () => {
		const { mode_GHz: _, ...without } = model;
		expect(messageFor(without, 'mode_GHz')).toBe('mode_GHz is required');
		expect(messageFor({ ...model, mode_GHz: Number.NaN }, 'mode_GHz')).toBe('mode_GHz is required');
		expect(messageFor({ ...model, mode_GHz: '' }, 'mode_GHz')).toBe('mode_GHz is required');
	});

	it('text where a number belongs is "… must be a number"; the range checks keep their words', () => {
		expect(messageFor({ ...model, A: 'six' }, 'A')).toBe('A must be a number');
		expect(messageFor({ ...model, W0_per_s: -1 }, 'W0_per_s')).toBe('W0_per_s must be a positive rate');
		expect(messageFor({ ...model, reference: { detuning: 0, drive: 1 } }, 'reference')).toBe('damping is required');
		expect(rateModelSchema.safeParse(model).success).toBe(true);
	});
});

describe('number fields of a new setup (superforms sends numbers, the JSON API must too)', () => {
	it('an absent mode_GHz names the field, and text in a number field says so', () => {
		const r = newSetupSchema.safeParse({ name: 'line A', order: 3, states: 6, nominal_mK: 12 });
		expect(r.error?.issues.map((i) => i.message)).toEqual(['mode_GHz is required']);
		const text = newSetupSchema.safeParse({ name: 'line A', order: 3, states: 6, mode_GHz: '5.1', nominal_mK: 12 });
		expect(text.error?.issues.map((i) => i.message)).toEqual(['mode_GHz must be a number']);
		expect(newSetupSchema.safeParse({ name: 'line A', order: 3, states: 6, mode_GHz: 5.1, nominal_mK: 12 }).success).toBe(true);
	});
});
