// One kept report of the signed-in person.
import { error } from '@sveltejs/kit';
import { requireRole } from '$lib/server/http/guard';
import { getKeptReport } from '$lib/server/reports/store';
import { getRuntime } from '$lib/server/runtime';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const person = requireRole(event, 'observer');
	const { db } = await getRuntime();
	const kept = await getKeptReport(db, event.params.id, person.id);
	if (!kept) error(404, 'no report of yours with this id');
	return { report: kept.report, kind: kept.kind };
};
