// Overview: every setup with its open runs; the page keeps it live by SSE and a 10 s refresh.
import { listSilences } from '$lib/server/alerting/silences';
import { getRuntime } from '$lib/server/runtime';
import { apiGet } from '$lib/ui/api';
import type { Setup } from '$lib/ui/types';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ fetch, depends }) => {
	depends('pw:setups');
	const [{ setups }, { db }] = await Promise.all([apiGet<{ setups: Setup[] }>(fetch, '/api/setups'), getRuntime()]);
	return { setups, silences: await listSilences(db, { activeOnly: true }) };
};
