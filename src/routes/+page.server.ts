// Overview: every setup with its open runs; the page keeps it live by SSE and a 10 s refresh.
import { pagingNow } from '$lib/server/oncall/clock';
import { onCallNowNames } from '$lib/server/oncall/rota-service';
import { listSilences } from '$lib/server/alerting/silences';
import { getRuntime } from '$lib/server/runtime';
import { apiGet } from '$lib/ui/api';
import type { Setup } from '$lib/ui/types';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ fetch, depends }) => {
	depends('pw:setups');
	const [{ setups }, { db }] = await Promise.all([apiGet<{ setups: Setup[] }>(fetch, '/api/setups'), getRuntime()]);
	const [onCall, silences] = await Promise.all([onCallNowNames(db, setups.map((s) => s.id), pagingNow()), listSilences(db, { activeOnly: true })]);
	return { setups, onCall, silences };
};
