// Numbers typed as text in the planner's forms: a zod field that names what is wrong with the text
// (empty, not a number, out of range) by the field's label, and the first message per field.
import { z } from 'zod';

// Plain decimal or scientific notation: refuses '', 'Infinity', '0x1f', '1e'.
export const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

export function numberField(label: string) {
	return z
		.string()
		.trim()
		.min(1, `${label} is required`)
		.regex(NUMBER, `${label} must be a number, like 0.5 or 1e-3`)
		.transform(Number)
		.pipe(z.number().finite(`${label} is out of range`));
}

export function integerField(label: string, min: number, max: number) {
	return numberField(label).pipe(
		z
			.number()
			.int(`${label} must be a whole number`)
			.min(min, `${label} must be at least ${min}`)
			.max(max, `${label} must be at most ${max}`)
	);
}

export type ParseResult<T, F extends string> = { ok: true; value: T } | { ok: false; errors: Partial<Record<F, string>> };

export function collectErrors<F extends string>(error: z.ZodError): Partial<Record<F, string>> {
	const errors: Partial<Record<F, string>> = {};
	for (const issue of error.issues) {
		const key = String(issue.path[0] ?? '') as F;
		if (!(key in errors)) errors[key] = issue.message;
	}
	return errors;
}
