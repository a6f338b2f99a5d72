// The signed-in person's kept morning reports, and a report made on demand for any span.
import { fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { describeZodError } from '$lib/protocol/messages';
import { requireRole } from '$lib/server/http/guard';
import { reportNow } from '$lib/server/reports/clock';
import { reportForPerson } from '$lib/server/reports/on-demand';
import { zonedLocalToMs } from '$lib/server/reports/local-input';
import { getReportSettings } from '$lib/server/reports/settings';
import { keepReport, listKeptReports } from '$lib/server/reports/store';
import { getRuntime } from '$lib/server/runtime';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const person = requireRole(event, 'observer');
	const { db } = await getRuntime();
	const now_ms = reportNow();
	const [reports, settings] = await Promise.all([listKeptReports(db, person.id), getReportSettings(db, person.id, now_ms)]);
	return { reports, timeZone: settings.effectiveTimeZone, now_ms };
};

const local = z.string().regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}$/, 'give a date and time');
const spanForm = z.object({ since: local, until: local });

export const actions: Actions = {
	make: async (event) => {
		const person = requireRole(event, 'observer');
		const form = Object.fromEntries(await event.request.formData());
		const parsed = spanForm.safeParse(form);
		if (!parsed.success)
			return fail(400, { message: describeZodError(parsed.error), since: String(form.since ?? ''), until: String(form.until ?? '') });
		const { db } = await getRuntime();
		const now_ms = reportNow();
		const { effectiveTimeZone } = await getReportSettings(db, person.id, now_ms);
		const since_ms = zonedLocalToMs(parsed.data.since, effectiveTimeZone);
		const until_ms = zonedLocalToMs(parsed.data.until, effectiveTimeZone);
		if (since_ms >= until_ms) return fail(400, { message: 'the start must be before the end', ...parsed.data });
		const report = await reportForPerson(db, person, { since_ms, until_ms }, now_ms);
		const id = await keepReport(db, person.id, 'on_demand', report);
		redirect(303, `/reports/${id}`);
	}
};
