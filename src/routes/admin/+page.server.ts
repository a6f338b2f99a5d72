// Admin: people and their roles. Guarded here for a clear 403 page; the same services and checks as the API.
import { error, fail as kitFail } from '@sveltejs/kit';
import { APIError } from 'better-auth/api';
import { fail, message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { newUserSchema } from '$lib/people/forms';
import { isRole } from '$lib/roles';
import { addUser, changeRole, listUsers, RoleChangeError } from '$lib/server/auth/users';
import { ActivationError, setActive } from '$lib/server/people/activation';
import { getRuntime } from '$lib/server/runtime';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => {
	if (locals.user?.role !== 'admin') error(403, 'Managing people needs the admin role.');
	const { db } = await getRuntime();
	const [users, form] = await Promise.all([
		listUsers(db),
		superValidate({ role: 'observer' as const }, zod4(newUserSchema), { errors: false })
	]);
	return { users, form };
};

/** The userId field of a row's small form, or null when the form did not send it. */
function userIdOf(form: FormData): string | null {
	const v = form.get('userId');
	return typeof v === 'string' && v.trim() !== '' ? v.trim() : null;
}

export const actions: Actions = {
	addUser: async ({ request, locals }) => {
		const form = await superValidate(request, zod4(newUserSchema));
		const input = { ...form.data };
		// The first password never travels back to the page.
		form.data.password = '';
		if (locals.user?.role !== 'admin') return message(form, 'Only admins add people.', { status: 403 });
		if (!form.valid) return fail(400, { form });
		const { auth } = await getRuntime();
		try {
			const user = await addUser(auth, input);
			return message(form, `Added ${user.name}.`);
		} catch (err) {
			if (err instanceof APIError) return setError(form, 'email', err.message);
			throw err;
		}
	},
	changeRole: async ({ request, locals }) => {
		const form = await request.formData();
		const userId = userIdOf(form);
		const role = form.get('role');
		const me = locals.user;
		if (me?.role !== 'admin') return kitFail(403, { intent: 'changeRole', userId, message: 'Only admins change roles.' });
		if (!userId) return kitFail(400, { intent: 'changeRole', userId, message: 'The form did not say whose role.' });
		if (!isRole(role)) return kitFail(400, { intent: 'changeRole', userId, message: 'Choose admin, operator or observer.' });
		const { db } = await getRuntime();
		try {
			if (!(await changeRole(db, me.id, userId, role))) return kitFail(404, { intent: 'changeRole', userId, message: 'No such person.' });
		} catch (err) {
			if (err instanceof RoleChangeError) return kitFail(400, { intent: 'changeRole', userId, message: err.text });
			throw err;
		}
		return { intent: 'changeRole', userId, changed: role };
	},
	setActive: async ({ request, locals }) => {
		const form = await request.formData();
		const userId = userIdOf(form);
		const active = form.get('active') === 'true';
		if (locals.user?.role !== 'admin') return kitFail(403, { intent: 'setActive', userId, message: 'Only admins deactivate people.' });
		if (!userId) return kitFail(400, { intent: 'setActive', userId, message: 'The form did not say who.' });
		const { db } = await getRuntime();
		try {
			if (!(await setActive(db, userId, active))) return kitFail(404, { intent: 'setActive', userId, message: 'No such person.' });
		} catch (err) {
			if (err instanceof ActivationError) return kitFail(409, { intent: 'setActive', userId, message: err.text });
			throw err;
		}
		return { intent: 'setActive', userId, active };
	}
};
