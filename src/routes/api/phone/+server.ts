import { error } from '@sveltejs/kit';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { getPhone, PhoneError, phoneSchema, removePhone, startVerification } from '$lib/server/sms/phone';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	const user = requireRole(event, 'observer');
	const { db } = await getRuntime();
	return json({ phone: await getPhone(db, user.id) });
};

/** Sets the signed-in person's number (unverified) and texts it a 6-digit code. */
export const PUT: RequestHandler = async (event) => {
	const user = requireRole(event, 'observer');
	const { number } = await readJson(event.request, phoneSchema);
	const { db, delivery } = await getRuntime();
	try {
		await startVerification(db, delivery.sms, user.id, number);
	} catch (err) {
		if (err instanceof PhoneError) error(err.status, err.message);
		throw err;
	}
	return json({ phone: await getPhone(db, user.id) }, { status: 202 });
};

export const DELETE: RequestHandler = async (event) => {
	const user = requireRole(event, 'observer');
	const { db } = await getRuntime();
	await removePhone(db, user.id);
	return json({ phone: null });
};
