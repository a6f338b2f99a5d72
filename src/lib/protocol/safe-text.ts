// Text the database can store: Postgres text refuses U+0000, and an unpaired UTF-16 surrogate has no
// UTF-8 form, so either one would fail the insert and take the whole batch with it. Refusing them at
// validation gives the sender a named error instead. Hand-written because zod has no such check and
// the test is a short scan (String.prototype.isWellFormed is Node 20+ but not in every browser we serve).
import { z } from 'zod';

export const NUL_MESSAGE = 'must not contain NUL (U+0000)';
export const LONE_SURROGATE_MESSAGE = 'must not contain an unpaired surrogate';

/** The first problem that keeps `text` out of a Postgres text column, or null when it can be stored. */
export function textProblem(text: string): string | null {
	for (let i = 0; i < text.length; i++) {
		const unit = text.charCodeAt(i);
		if (unit === 0) return NUL_MESSAGE;
		if (unit >= 0xd800 && unit <= 0xdbff) {
			const next = text.charCodeAt(i + 1);
			if (next >= 0xdc00 && next <= 0xdfff) {
				i++;
				continue;
			}
			return LONE_SURROGATE_MESSAGE;
		}
		if (unit >= 0xdc00 && unit <= 0xdfff) return LONE_SURROGATE_MESSAGE;
	}
	return null;
}

/** Adds the storable-text check to a string schema; use it for every string that reaches a column. */
export function safeText<T extends z.ZodString>(schema: T) {
	return schema.superRefine((text, ctx) => {
		const problem = textProblem(text);
		if (problem) ctx.addIssue({ code: 'custom', message: problem });
	});
}
