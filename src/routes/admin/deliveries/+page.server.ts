// Admin: every notification in the outbox, its state and attempts, and a Retry for any of them.
// Guarded here for a clear 403 page; the same services and checks as the API.
import { error, fail } from '@sveltejs/kit';
import { deliveryQuerySchema, listDeliveries } from '$lib/server/outbox/list';
import { outboxExpiry_ms } from '$lib/server/outbox/settings';
import { retryDelivery } from '$lib/server/outbox/worker';
import { OUTBOX_STATUSES } from '$lib/server/db/schema';
import { getRuntime } from '$lib/server/runtime';
import type { Actions, PageServerLoad } from './$types';

const STATUSES: readonly string[] = OUTBOX_STATUSES;

export const load: PageServerLoad = async ({ locals, url }) => {
	if (locals.user?.role !== 'admin') error(403, 'The delivery log needs the admin role.');
	const status = url.searchParams.get('status');
	const filter = status && STATUSES.includes(status) ? status : null;
	const { db } = await getRuntime();
	const deliveries = await listDeliveries(db, deliveryQuerySchema.parse({ limit: 200, status: filter ?? undefined }));
	return { deliveries, status: filter, statuses: [...STATUSES] };
};

export const actions: Actions = {
	retry: async ({ request, locals }) => {
		const raw = (await request.formData()).get('id');
		const id = typeof raw === 'string' && raw.trim() ? raw.trim() : undefined;
		if (locals.user?.role !== 'admin') return fail(403, { id, message: 'Only admins retry deliveries.' });
		if (!id) return fail(400, { id, message: 'The form did not say which delivery.' });
		const { db, delivery } = await getRuntime();
		const result = await retryDelivery(db, id, outboxExpiry_ms());
		if (!result.row) return fail(result.error ?? 500, { id, message: result.message ?? 'retry failed' });
		void delivery.worker.wake();
		return { id, retried: true };
	}
};
