// Incidents table: filter, sort and page come from the URL, so it works without JS and links can be shared.
import { apiGet } from '$lib/ui/api';
import type { Incident, Setup } from '$lib/ui/types';
import { parseQuery } from './query';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ fetch, url, depends }) => {
	depends('pw:incidents');
	const q = parseQuery(url.searchParams);
	const api = new URLSearchParams({ sort: q.sort, order: q.order, page: String(q.page), pageSize: String(q.pageSize) });
	if (q.state) api.set('state', q.state);
	if (q.setup) api.set('setup', q.setup);
	const [list, setups] = await Promise.all([
		apiGet<{ incidents: Incident[]; total: number; page: number; pageSize: number }>(fetch, `/api/incidents?${api}`),
		apiGet<{ setups: Setup[] }>(fetch, '/api/setups')
	]);
	return {
		query: q,
		incidents: list.incidents,
		total: list.total,
		setups: setups.setups.map((s) => ({ id: s.id, name: s.name }))
	};
};
