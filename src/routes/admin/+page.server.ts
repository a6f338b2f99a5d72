// Admin: people and their roles. Guarded here for a clear 403 page; the API enforces it as well.
import { error, fail } from '@sveltejs/kit';
import { isRole } from '$lib/roles';
import { ActivationError, setActive } from '$lib/server/people/activation';
import { getRuntime } from '$lib/server/runtime';
import { apiGet, apiSend, field } from '$lib/ui/api';
import { fieldError } from '$lib/ui/fields';
import type { Person } from '$lib/ui/types';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ fetch, locals }) => {
	if (locals.user?.role !== 'admin') error(403, 'Managing people needs the admin role.');
	const { users } = await apiGet<{ users: Person[] }>(fetch, '/api/users');
	return { users };
};

export const actions: Actions = {
	addUser: async ({ request, fetch, locals }) => {
		const form = await request.formData();
		const values = { email: field(form, 'email') ?? '', name: field(form, 'name') ?? '', role: field(form, 'role') ?? 'observer' };
		if (locals.user?.role !== 'admin') return fail(403, { intent: 'addUser', values, field: null, message: 'Only admins add people.' });
		const password = String(form.get('password') ?? '');
		if (!values.email) return fail(400, { intent: 'addUser', values, field: 'email', message: 'Enter their e-mail address.' });
		if (!values.name) return fail(400, { intent: 'addUser', values, field: 'name', message: 'Enter their name.' });
		if (!isRole(values.role)) return fail(400, { intent: 'addUser', values, field: 'role', message: 'Choose admin, operator or observer.' });
		if (!password) return fail(400, { intent: 'addUser', values, field: 'password', message: 'Set a first password for them.' });
		const res = await apiSend<{ user: Person }>(fetch, '/api/users', 'POST', { ...values, password });
		if (!res.ok || !res.data) {
			const { field: f, text } = fieldError(res.message);
			return fail(res.status, { intent: 'addUser', values, field: f, message: text });
		}
		return { intent: 'addUser', added: res.data.user.name };
	},
	changeRole: async ({ request, fetch, locals }) => {
		const form = await request.formData();
		const userId = field(form, 'userId');
		const role = field(form, 'role');
		if (locals.user?.role !== 'admin') return fail(403, { intent: 'changeRole', userId, message: 'Only admins change roles.' });
		if (!userId) return fail(400, { intent: 'changeRole', userId, message: 'The form did not say whose role.' });
		if (!isRole(role)) return fail(400, { intent: 'changeRole', userId, message: 'Choose admin, operator or observer.' });
		const res = await apiSend<{ user: Person }>(fetch, `/api/users/${encodeURIComponent(userId)}`, 'PATCH', { role });
		if (!res.ok) return fail(res.status, { intent: 'changeRole', userId, message: fieldError(res.message).text });
		return { intent: 'changeRole', userId, changed: role };
	},
	setActive: async ({ request, locals }) => {
		const form = await request.formData();
		const userId = field(form, 'userId');
		const active = field(form, 'active') === 'true';
		if (locals.user?.role !== 'admin') return fail(403, { intent: 'setActive', userId, message: 'Only admins deactivate people.' });
		if (!userId) return fail(400, { intent: 'setActive', userId, message: 'The form did not say who.' });
		const { db } = await getRuntime();
		try {
			if (!(await setActive(db, userId, active))) return fail(404, { intent: 'setActive', userId, message: 'No such person.' });
		} catch (err) {
			if (err instanceof ActivationError) return fail(409, { intent: 'setActive', userId, message: fieldError(err.message).text });
			throw err;
		}
		return { intent: 'setActive', userId, active };
	}
};
