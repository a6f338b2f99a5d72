// The signed-in person's own settings: where alerts reach them, and their morning report. Each
// section has its own named action or API calls.
import { fail } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { describeZodError } from '$lib/protocol/messages';
import { setupMembers, setups } from '$lib/server/db/schema';
import { requireRole } from '$lib/server/http/guard';
import { reportNow } from '$lib/server/reports/clock';
import { getReportSettings, reportSettingsSchema, saveReportSettings } from '$lib/server/reports/settings';
import { labTimeZone } from '$lib/server/reports/time-zone';
import { listSubscriptions } from '$lib/server/push/subscriptions';
import { getRuntime } from '$lib/server/runtime';
import { getPhone } from '$lib/server/sms/phone';
import { alertPrefsActions, loadAlertPrefs } from './alert-prefs.server';
import { apiTokenActions, loadApiTokens } from './api-tokens.server';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const person = requireRole(event, 'observer');
	const { db, delivery } = await getRuntime();
	const [apiTokens, alertPrefs, devices, phone, settings, allSetups, member] = await Promise.all([
		loadApiTokens(event),
		loadAlertPrefs(event),
		listSubscriptions(db, person.id),
		getPhone(db, person.id),
		getReportSettings(db, person.id, reportNow()),
		db.select({ id: setups.id, name: setups.name }).from(setups).orderBy(setups.name),
		db.select({ id: setupMembers.setupId }).from(setupMembers).where(eq(setupMembers.userId, person.id))
	]);
	return {
		apiTokens,
		alertPrefs,
		push: { devices, publicKey: delivery.vapid.publicKey, catcher: Boolean(delivery.pushCatcher) },
		phone,
		reportSettings: settings,
		setups: allSetups,
		memberOf: member.map((m) => m.id),
		labTimeZone: labTimeZone()
	};
};

export const actions: Actions = {
	...apiTokenActions,
	...alertPrefsActions,
	reports: async (event) => {
		const person = requireRole(event, 'observer');
		const form = await event.request.formData();
		const follow = form.getAll('followSetups').map(String);
		const parsed = reportSettingsSchema.safeParse({
			enabled: form.get('enabled') === 'on',
			reportTime: String(form.get('reportTime') ?? ''),
			timeZone: String(form.get('timeZone') ?? ''),
			followSetups: follow.length ? follow : null
		});
		if (!parsed.success) return fail(400, { reports: { message: describeZodError(parsed.error) } });
		const { db } = await getRuntime();
		try {
			await saveReportSettings(db, person.id, parsed.data, reportNow());
		} catch (e) {
			if (e instanceof RangeError) return fail(400, { reports: { message: e.message } });
			throw e;
		}
		return { reports: { saved: true } };
	}
};
