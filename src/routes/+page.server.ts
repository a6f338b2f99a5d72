// Overview: every setup with its open runs; the page keeps it live by SSE and a 10 s refresh.
import { apiGet } from '$lib/ui/api';
import type { Setup } from '$lib/ui/types';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ fetch, depends }) => {
	depends('pw:setups');
	const { setups } = await apiGet<{ setups: Setup[] }>(fetch, '/api/setups');
	return { setups };
};
