// The settings page's alert-preferences section: its load and its `alertPrefs` action.
import { fail, type RequestEvent } from '@sveltejs/kit';
import { describeZodError } from '$lib/protocol/messages';
import { alertPrefsSchema, prefsOf, savePrefs } from '$lib/server/alerting/preferences';
import { alertPreferences } from '$lib/server/db/schema';
import { requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { eq } from 'drizzle-orm';

export async function loadAlertPrefs(event: Pick<RequestEvent, 'locals'>) {
	const person = requireRole(event, 'observer');
	const { db } = await getRuntime();
	const prefs = (await prefsOf(db, [person.id])).get(person.id)!;
	// The stored zone (empty when following the lab's), not the resolved one, so the form shows the choice.
	const [row] = await db
		.select({ timeZone: alertPreferences.timeZone })
		.from(alertPreferences)
		.where(eq(alertPreferences.userId, person.id));
	return { ...prefs, timeZone: row?.timeZone ?? '' };
}

export const alertPrefsActions = {
	alertPrefs: async (event: RequestEvent) => {
		const person = requireRole(event, 'observer');
		const form = await event.request.formData();
		const parsed = alertPrefsSchema.safeParse({
			channels: form.getAll('channels').map(String),
			severities: form.getAll('severities').map(String),
			quietStart: String(form.get('quietStart') ?? ''),
			quietEnd: String(form.get('quietEnd') ?? ''),
			timeZone: String(form.get('timeZone') ?? '').trim(),
			notifyOnClear: form.get('notifyOnClear') === 'on'
		});
		if (!parsed.success) return fail(400, { alertPrefs: { message: describeZodError(parsed.error) } });
		const { db } = await getRuntime();
		await savePrefs(db, person.id, parsed.data);
		return { alertPrefs: { saved: true } };
	}
};
