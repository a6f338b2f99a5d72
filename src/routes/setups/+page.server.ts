// Setups: the list for everyone, and a create form for operators (checked by the schema the API uses).
import { redirect } from '@sveltejs/kit';
import { fail, message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { hasRole } from '$lib/roles';
import { requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { createSetup, listSetupsWithStatus, setupNameTaken } from '$lib/server/setups/service';
import { newSetupSchema } from '$lib/setups/forms';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'observer');
	const { db } = await getRuntime();
	const [setups, form] = await Promise.all([listSetupsWithStatus(db), superValidate(zod4(newSetupSchema))]);
	return { setups, form };
};

export const actions: Actions = {
	createSetup: async ({ request, locals }) => {
		const form = await superValidate(request, zod4(newSetupSchema));
		const user = locals.user;
		if (!user || !hasRole(user.role, 'operator')) return message(form, 'Only operators can add setups.', { status: 403 });
		if (!form.valid) return fail(400, { form });
		const { db } = await getRuntime();
		if (await setupNameTaken(db, form.data.name))
			return setError(form, 'name', `a setup called "${form.data.name}" exists already`, { status: 409 });
		const setup = await createSetup(db, form.data, user.id);
		redirect(303, `/setups/${setup.id}`);
	}
};
