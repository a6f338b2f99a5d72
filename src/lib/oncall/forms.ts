// The rota and override forms' schemas, shared by the browser (superforms' client validation) and
// the server (form actions and the JSON API), so both name the same problems.
import { z } from 'zod';

const HHMM = /^([01]\d|2[0-3]):([0-5]\d)$/;

export const rotaSchema = z.object({
	/** In rotation order; empty entries (an unused picker) are dropped when saved. */
	members: z.array(z.string()).max(50, 'a rota has at most 50 people'),
	handoverWeekday: z.coerce
		.number()
		.int()
		.min(1, 'handoverWeekday is 1 (Monday) to 7 (Sunday)')
		.max(7, 'handoverWeekday is 1 (Monday) to 7 (Sunday)')
		.default(1),
	handoverTime: z.string().regex(HHMM, 'handoverTime must be HH:MM (24-hour)').default('09:00'),
	startsOn: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'startsOn must be a date YYYY-MM-DD'),
	criticalAckMin: z.coerce
		.number()
		.int()
		.min(1, 'criticalAckMin is at least 1 minute')
		.max(1440, 'criticalAckMin is at most 1440 minutes')
		.default(10),
	warningAckMin: z.coerce
		.number()
		.int()
		.min(1, 'warningAckMin is at least 1 minute')
		.max(1440, 'warningAckMin is at most 1440 minutes')
		.default(30)
});
export type RotaInput = z.infer<typeof rotaSchema>;

/** An override as the form sends it: local wall-clock times in the lab's time zone. */
export const overrideFormSchema = z
	.object({
		userId: z.string().min(1, 'choose who covers'),
		from: z.string().regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}$/, 'from must be a date and time'),
		until: z.string().regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}$/, 'until must be a date and time'),
		note: z.string().trim().max(500, 'note is at most 500 characters').default('')
	})
	.refine((o) => o.until > o.from, { message: 'until must be after from', path: ['until'] });
