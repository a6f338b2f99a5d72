// Overview: every setup with its open runs; the page keeps it live by SSE and a 10 s refresh.
import { pagingNow } from '$lib/server/oncall/clock';
import { onCallNowNames } from '$lib/server/oncall/rota-service';
import { getRuntime } from '$lib/server/runtime';
import { apiGet } from '$lib/ui/api';
import type { Setup } from '$lib/ui/types';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ fetch, depends }) => {
	depends('pw:setups');
	const { setups } = await apiGet<{ setups: Setup[] }>(fetch, '/api/setups');
	const { db } = await getRuntime();
	const onCall = await onCallNowNames(db, setups.map((s) => s.id), pagingNow());
	return { setups, onCall };
};
