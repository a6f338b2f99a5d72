// Ending a silence early (operators and admins); it stays listed with who ended it.
import { error } from '@sveltejs/kit';
import { json, requireRole } from '$lib/server/http/guard';
import { endSilence, SilenceError } from '$lib/server/alerting/silences';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

export const DELETE: RequestHandler = async (event) => {
	const user = requireRole(event, 'operator');
	const { db } = await getRuntime();
	try {
		return json({ silence: await endSilence(db, event.params.id, user.id) });
	} catch (err) {
		if (err instanceof SilenceError) error(err.status, err.message);
		throw err;
	}
};
