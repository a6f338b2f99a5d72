// The setup forms' rules, shared by the browser (superforms' client checks), the form actions and the
// JSON API, so a field is refused with the same words wherever it is sent.
import { z } from 'zod';
import { safeText } from '../protocol/safe-text';

/**
 * A number the person must give. Nullable so that an empty form field arrives as null (superforms
 * otherwise fills in 0) and is refused as missing rather than as out of range.
 */
function requiredNumber(name: string, checks: (n: z.ZodNumber) => z.ZodNumber) {
	const base = z.number({
		error: (issue) => (issue.input === undefined || issue.input === null ? `${name} is required` : `${name} must be a number`)
	});
	// The cast only tells TypeScript what the refine guarantees: the output is never null.
	return checks(base)
		.nullable()
		.refine((v) => v !== null, `${name} is required`) as unknown as z.ZodType<number, number | null>;
}

export const newSetupSchema = z
	.object({
		name: safeText(z.string().trim().min(1, 'name is required').max(80, 'name is at most 80 characters')),
		description: safeText(z.string().trim().max(500, 'description is at most 500 characters')).default(''),
		order: requiredNumber('order (M)', (n) =>
			n.int('order (M) is a whole number').min(2, 'order (M) is at least 2').max(8, 'order (M) is at most 8')
		),
		states: requiredNumber('states', (n) =>
			n.int('states is a whole number').min(2, 'states is at least 2').max(16, 'states is at most 16')
		),
		mode_GHz: requiredNumber('mode_GHz', (n) => n.positive('mode_GHz must be positive').max(100, 'mode_GHz is at most 100')),
		nominal_mK: requiredNumber('nominal_mK', (n) => n.min(0, 'nominal_mK must not be negative').max(4000, 'nominal_mK is at most 4000'))
	})
	.refine((s) => s.states === s.order || s.states === 2 * s.order, {
		message: 'states must be M or 2M',
		path: ['states']
	});
export type NewSetup = z.infer<typeof newSetupSchema>;

export const agentTokenSchema = z.object({
	label: safeText(z.string().trim().min(1, 'label is required').max(80, 'label is at most 80 characters'))
});

export const newWebhookSchema = z.object({
	url: z.url({ message: 'url must be a URL' }).refine((u) => /^https?:\/\//.test(u), 'url must start with http:// or https://'),
	label: z.string().trim().max(80, 'label is at most 80 characters').default('')
});

export const memberSchema = z.object({ userId: safeText(z.string().min(1, 'userId is required: choose a person to add')) });

/** Raw-frame retention of a setup: whole days, or empty (null) for "keep for good". */
export const retentionSchema = z.object({
	rawRetentionDays: z
		.number({ error: 'rawRetentionDays must be a whole number of days' })
		.int('rawRetentionDays must be a whole number of days')
		.min(1, 'rawRetentionDays is at least 1 day (leave it empty to keep raw frames for good)')
		.max(36_500, 'rawRetentionDays is at most 36500 days')
		.nullable()
		.default(null)
});
