// The morning report of the signed-in person's followed setups over [since_ms, until_ms) as JSON:
// runs (each with its summary), incidents, annotations. Made on the spot, not kept.
import { error } from '@sveltejs/kit';
import { json, parseQuery, requireRole } from '$lib/server/http/guard';
import { reportNow } from '$lib/server/reports/clock';
import { reportForPerson, reportSpanSchema } from '$lib/server/reports/on-demand';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	const person = requireRole(event, 'observer');
	const span = parseQuery(event.url, reportSpanSchema);
	const { db } = await getRuntime();
	try {
		return json(await reportForPerson(db, person, span, reportNow()));
	} catch (e) {
		if (e instanceof RangeError) error(400, e.message);
		throw e;
	}
};
