// Admin: every notification in the outbox, its state and attempts, and a Retry for any of them.
// Guarded here for a clear 403 page; the API enforces it as well.
import { error, fail } from '@sveltejs/kit';
import { apiGet, apiSend, field } from '$lib/ui/api';
import type { DeliveryRow } from '$lib/ui/deliveries';
import type { Actions, PageServerLoad } from './$types';

const STATUSES = ['pending', 'sending', 'sent', 'failed', 'expired'];

export const load: PageServerLoad = async ({ fetch, locals, url }) => {
	if (locals.user?.role !== 'admin') error(403, 'The delivery log needs the admin role.');
	const status = url.searchParams.get('status');
	const filter = status && STATUSES.includes(status) ? status : null;
	const { deliveries } = await apiGet<{ deliveries: DeliveryRow[] }>(fetch, `/api/deliveries?limit=200${filter ? `&status=${filter}` : ''}`);
	return { deliveries, status: filter, statuses: STATUSES };
};

export const actions: Actions = {
	retry: async ({ request, fetch, locals }) => {
		const form = await request.formData();
		const id = field(form, 'id');
		if (locals.user?.role !== 'admin') return fail(403, { id, message: 'Only admins retry deliveries.' });
		if (!id) return fail(400, { id, message: 'The form did not say which delivery.' });
		const res = await apiSend(fetch, `/api/deliveries/${encodeURIComponent(id)}/retry`, 'POST');
		if (!res.ok) return fail(res.status, { id, message: res.message });
		return { id, retried: true };
	}
};
