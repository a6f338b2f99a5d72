// One-tap acknowledge: GET only shows what the link would do (mail scanners prefetch links), the
// POST acknowledges. The signed token is the whole authority; no session is created or read.
import { fail } from '@sveltejs/kit';
import { AckLinkRefused, inspectAckLink, useAckLink } from '$lib/server/alerting/ack-links';
import { getRuntime } from '$lib/server/runtime';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ params, setHeaders }) => {
	setHeaders({ 'cache-control': 'no-store', 'referrer-policy': 'no-referrer' });
	const { db } = await getRuntime();
	const view = await inspectAckLink(db, params.token);
	return view.ok ? { ok: true as const, incident: view.incident, person: view.person } : { ok: false as const, message: view.message };
};

export const actions: Actions = {
	default: async ({ params }) => {
		const { db, bus } = await getRuntime();
		try {
			const incident = await useAckLink(db, params.token);
			bus.publish({ type: 'incident', runId: incident.runId, setupId: incident.setupId, incident });
			return { acknowledged: true };
		} catch (err) {
			if (err instanceof AckLinkRefused) return fail(409, { refused: err.message });
			throw err;
		}
	}
};
