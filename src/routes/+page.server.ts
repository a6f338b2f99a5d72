// Overview: every setup with its open runs; the page keeps it live by SSE and a 10 s refresh.
import { pagingNow } from '$lib/server/oncall/clock';
import { onCallNowNames } from '$lib/server/oncall/rota-service';
import { listSilences } from '$lib/server/alerting/silences';
import { requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { listSetupsWithStatus } from '$lib/server/setups/service';
import type { Setup } from '$lib/ui/types';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	event.depends('pw:setups');
	requireRole(event, 'observer');
	const { db } = await getRuntime();
	// Typed as the JSON API's shape: the page patches runs into it from the live feed.
	const setups: Setup[] = await listSetupsWithStatus(db);
	const [onCall, silences] = await Promise.all([
		onCallNowNames(
			db,
			setups.map((s) => s.id),
			pagingNow()
		),
		listSilences(db, { activeOnly: true })
	]);
	return { setups, onCall, silences };
};
