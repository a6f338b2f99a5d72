// Each person's alert preferences: read by the outbox when it fans a notice out to channels, and
// edited on the settings page.
import { inArray } from 'drizzle-orm';
import { z } from 'zod';
import { ALERT_SEVERITIES, DEFAULT_ALERT_PREFS, PERSONAL_CHANNELS, type AlertPrefs } from '../../alerting/channels-for';
import { isTimeZone } from '../../reports/schedule';
import type { Db, Tx } from '../db';
import { alertPreferences } from '../db/schema';
import { labTimeZone } from '../reports/time-zone';

export type PersonPrefs = AlertPrefs & { timeZone: string };

/** Preferences of several people at once; a person without a row gets the defaults in the lab's zone. */
export async function prefsOf(tx: Tx | Db, userIds: string[]): Promise<Map<string, PersonPrefs>> {
	const lab = labTimeZone();
	const rows = userIds.length ? await tx.select().from(alertPreferences).where(inArray(alertPreferences.userId, userIds)) : [];
	const out = new Map<string, PersonPrefs>();
	for (const id of userIds) {
		const r = rows.find((x) => x.userId === id);
		out.set(
			id,
			r
				? {
						channels: r.channels,
						severities: r.severities,
						quietStart: r.quietStart,
						quietEnd: r.quietEnd,
						notifyOnClear: r.notifyOnClear,
						timeZone: r.timeZone || lab
					}
				: { ...DEFAULT_ALERT_PREFS, timeZone: lab }
		);
	}
	return out;
}

const hhmm = z.union([z.literal(''), z.string().regex(/^([01]\d|2[0-3]):[0-5]\d$/, 'a time as HH:MM, e.g. 22:00')]);

export const alertPrefsSchema = z
	.object({
		channels: z.array(z.enum(PERSONAL_CHANNELS)).default([]),
		severities: z.array(z.enum(ALERT_SEVERITIES)).default([]),
		quietStart: hhmm.default(''),
		quietEnd: hhmm.default(''),
		timeZone: z
			.string()
			.default('')
			.refine((tz) => tz === '' || isTimeZone(tz), 'an IANA time zone such as Europe/Vienna, or empty for the lab’s'),
		notifyOnClear: z.boolean().default(true)
	})
	.refine((p) => (p.quietStart === '') === (p.quietEnd === ''), {
		message: 'give both ends of the quiet hours, or neither',
		path: ['quietEnd']
	});
export type AlertPrefsInput = z.infer<typeof alertPrefsSchema>;

export async function savePrefs(db: Db, userId: string, p: AlertPrefsInput) {
	const values = {
		userId,
		channels: p.channels,
		severities: p.severities.includes('critical') ? p.severities : ['critical', ...p.severities],
		quietStart: p.quietStart || null,
		quietEnd: p.quietEnd || null,
		timeZone: p.timeZone || null,
		notifyOnClear: p.notifyOnClear,
		updatedAt: new Date()
	};
	await db.insert(alertPreferences).values(values).onConflictDoUpdate({ target: alertPreferences.userId, set: values });
}
