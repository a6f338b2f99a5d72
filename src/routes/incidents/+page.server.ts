// Incidents table: filter, sort and page come from the URL, so it works without JS and links can be shared.
import { requireRole } from '$lib/server/http/guard';
import { listIncidents } from '$lib/server/incidents/service';
import { getRuntime } from '$lib/server/runtime';
import { listSetups } from '$lib/server/setups/service';
import { parseQuery } from './query';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	event.depends('pw:incidents');
	requireRole(event, 'observer');
	const q = parseQuery(event.url.searchParams);
	const { db } = await getRuntime();
	const [list, setups] = await Promise.all([
		listIncidents(db, {
			sort: q.sort,
			order: q.order,
			page: q.page,
			pageSize: q.pageSize,
			state: q.state || undefined,
			setup: q.setup || undefined
		}),
		listSetups(db)
	]);
	return {
		query: q,
		incidents: list.incidents,
		total: list.total,
		setups: setups.map((s) => ({ id: s.id, name: s.name }))
	};
};
