// Setups: the list for everyone, and a create form for operators (the API validates and names the field).
import { fail, redirect } from '@sveltejs/kit';
import { hasRole } from '$lib/roles';
import { apiGet, apiSend, field } from '$lib/ui/api';
import { fieldError, numberField } from '$lib/ui/fields';
import type { Setup } from '$lib/ui/types';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ fetch }) => {
	const { setups } = await apiGet<{ setups: Setup[] }>(fetch, '/api/setups');
	return { setups };
};

export const actions: Actions = {
	createSetup: async ({ request, fetch, locals }) => {
		const form = await request.formData();
		const values = {
			name: field(form, 'name') ?? '',
			description: field(form, 'description') ?? '',
			order: String(form.get('order') ?? ''),
			states: String(form.get('states') ?? ''),
			mode_GHz: String(form.get('mode_GHz') ?? ''),
			nominal_mK: String(form.get('nominal_mK') ?? '')
		};
		if (!hasRole(locals.user?.role, 'operator')) return fail(403, { values, field: null, message: 'Only operators can add setups.' });
		if (!values.name) return fail(400, { values, field: 'name', message: 'Give the setup a name.' });
		const res = await apiSend<{ setup: { id: string } }>(fetch, '/api/setups', 'POST', {
			name: values.name,
			description: values.description,
			order: numberField(form, 'order'),
			states: numberField(form, 'states'),
			mode_GHz: numberField(form, 'mode_GHz'),
			nominal_mK: numberField(form, 'nominal_mK')
		});
		if (!res.ok || !res.data) {
			const { field: f, text } = fieldError(res.message);
			return fail(res.status, { values, field: f, message: text });
		}
		redirect(303, `/setups/${res.data.setup.id}`);
	}
};
