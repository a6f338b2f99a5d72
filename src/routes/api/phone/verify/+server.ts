import { error } from '@sveltejs/kit';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { codeSchema, confirmCode, getPhone, PhoneError } from '$lib/server/sms/phone';
import type { RequestHandler } from './$types';

/** Confirms the code texted to the signed-in person's number. */
export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'observer');
	const { code } = await readJson(event.request, codeSchema);
	const { db } = await getRuntime();
	try {
		await confirmCode(db, user.id, code);
	} catch (err) {
		if (err instanceof PhoneError) error(err.status, err.message);
		throw err;
	}
	return json({ phone: await getPhone(db, user.id) });
};
