// Number fields of the shared zod schemas, with messages that name the field: a form sends an empty
// or absent number as NaN or undefined, and zod's own "Invalid input: expected number, received NaN"
// tells a person neither which field nor what to do.
import { z } from 'zod';

const missing = (input: unknown) =>
	input === undefined || input === null || input === '' || (typeof input === 'number' && Number.isNaN(input));

/** A finite number called `name`: "mode_GHz is required" when absent, "mode_GHz must be a number" when not one. */
export function numberField(name: string) {
	return z
		.number({ error: (issue) => (missing(issue.input) ? `${name} is required` : `${name} must be a number`) })
		.finite(`${name} must be a finite number`);
}

/**
 * The same for fields read from text (query strings, form posts) through z.coerce.number: zod
 * hands the message only the coerced NaN, so absent and unreadable read alike.
 */
export function coercedNumberField(name: string) {
	return z.coerce.number({ error: `${name} is required and must be a number` });
}
