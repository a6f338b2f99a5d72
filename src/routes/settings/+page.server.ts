// Each person's own settings: where their alerts reach them.
import { apiGet } from '$lib/ui/api';
import type { PhoneState, PushDevice } from '$lib/ui/notify-settings';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ fetch }) => {
	const [{ subscriptions }, key, { phone }] = await Promise.all([
		apiGet<{ subscriptions: PushDevice[] }>(fetch, '/api/push/subscriptions'),
		apiGet<{ publicKey: string; catcher: boolean }>(fetch, '/api/push/key'),
		apiGet<{ phone: PhoneState | null }>(fetch, '/api/phone')
	]);
	return { push: { devices: subscriptions, publicKey: key.publicKey, catcher: key.catcher }, phone };
};
