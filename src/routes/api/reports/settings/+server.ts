// The signed-in person's morning-report settings.
import { error } from '@sveltejs/kit';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { reportNow } from '$lib/server/reports/clock';
import { getReportSettings, reportSettingsSchema, saveReportSettings } from '$lib/server/reports/settings';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	const person = requireRole(event, 'observer');
	const { db } = await getRuntime();
	return json(await getReportSettings(db, person.id, reportNow()));
};

export const PUT: RequestHandler = async (event) => {
	const person = requireRole(event, 'observer');
	const input = await readJson(event.request, reportSettingsSchema);
	const { db } = await getRuntime();
	try {
		return json(await saveReportSettings(db, person.id, input, reportNow()));
	} catch (e) {
		if (e instanceof RangeError) error(400, e.message);
		throw e;
	}
};
