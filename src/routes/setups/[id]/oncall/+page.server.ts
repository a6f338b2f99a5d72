// Who is on call for a setup: the next 14 days, the rotation and the overrides. Everyone signed in
// reads; operators edit. The loader and actions call the services directly.
import { error, fail } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { hasRole } from '$lib/roles';
import { fromLocal } from '$lib/oncall/rota';
import { overrideFormSchema, rotaSchema } from '$lib/oncall/forms';
import { requireRole } from '$lib/server/http/guard';
import { pagingNow } from '$lib/server/oncall/clock';
import { addOverride, deleteOverride, RotaError, rotaView, saveRota } from '$lib/server/oncall/rota-service';
import { followRota, RotaShareError, stopFollowing } from '$lib/server/oncall/rota-sharing';
import { labTimeZone } from '$lib/server/reports/time-zone';
import { getRuntime } from '$lib/server/runtime';
import { getSetup } from '$lib/server/setups/service';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireRole(event, 'observer');
	const { db } = await getRuntime();
	const setup = await getSetup(db, event.params.id);
	if (!setup) error(404, 'no setup with this id');
	const now = pagingNow();
	const view = await rotaView(db, event.params.id, now);
	const today = now.toISOString().slice(0, 10);
	const rotaForm = await superValidate(
		{
			members: view.rota?.members ?? [],
			handoverWeekday: view.rota?.handoverWeekday ?? 1,
			handoverTime: view.rota?.handoverTime ?? '09:00',
			startsOn: view.rota?.startsOn ?? today,
			criticalAckMin: view.policy.criticalAckMin ?? 10,
			warningAckMin: view.policy.warningAckMin ?? 30
		},
		zod4(rotaSchema),
		{ errors: false }
	);
	const overrideForm = await superValidate(zod4(overrideFormSchema));
	return {
		setup: { id: setup.id, name: setup.name },
		mayEdit: hasRole(user.role, 'operator'),
		...(JSON.parse(JSON.stringify(view)) as {
			timeZone: string;
			sharedFrom: { id: string; name: string } | null;
			followers: { id: string; name: string }[];
			followable: { id: string; name: string }[];
			now: { primary: string | null; secondary: string | null };
			members: { id: string; name: string }[];
			overrides: { id: string; name: string; from: string; until: string; note: string }[];
			spans: { from: string; until: string; primary: string | null; secondary: string | null }[];
		}),
		rotaForm,
		overrideForm
	};
};

export const actions: Actions = {
	saveRota: async (event) => {
		const user = requireRole(event, 'operator');
		const form = await superValidate(event.request, zod4(rotaSchema));
		if (!form.valid) return fail(400, { rotaForm: form });
		const { db } = await getRuntime();
		try {
			await saveRota(db, event.params.id, form.data, user.id);
		} catch (err) {
			if (err instanceof RotaError) return message(form, err.message, { status: 400 });
			throw err;
		}
		return message(form, 'Rota saved.');
	},
	addOverride: async (event) => {
		const user = requireRole(event, 'operator');
		const form = await superValidate(event.request, zod4(overrideFormSchema));
		if (!form.valid) return fail(400, { overrideForm: form });
		const { db } = await getRuntime();
		const tz = labTimeZone();
		try {
			await addOverride(
				db,
				event.params.id,
				{ userId: form.data.userId, from: fromLocal(form.data.from, tz), until: fromLocal(form.data.until, tz), note: form.data.note },
				user.id
			);
		} catch (err) {
			if (err instanceof RotaError) return message(form, err.message, { status: 400 });
			throw err;
		}
		return message(form, 'Override added.');
	},
	followRota: async (event) => {
		const user = requireRole(event, 'operator');
		const ownerId = String((await event.request.formData()).get('rotaSetupId') ?? '');
		if (!ownerId) return fail(400, { shareError: 'rotaSetupId: choose the setup whose rota to follow' });
		const { db } = await getRuntime();
		if (!(await getSetup(db, event.params.id))) error(404, 'no setup with this id');
		try {
			const owner = await followRota(db, event.params.id, ownerId, user.id);
			return { followed: owner.name };
		} catch (err) {
			if (err instanceof RotaShareError) return fail(400, { shareError: err.message });
			throw err;
		}
	},
	stopFollowing: async (event) => {
		requireRole(event, 'operator');
		const { db } = await getRuntime();
		if (!(await stopFollowing(db, event.params.id))) return fail(404, { shareError: 'this setup follows no other rota' });
		return { stopped: true };
	},
	deleteOverride: async (event) => {
		requireRole(event, 'operator');
		const id = String((await event.request.formData()).get('id') ?? '');
		const { db } = await getRuntime();
		if (!id || !(await deleteOverride(db, event.params.id, id)))
			return fail(404, { deleteError: 'no override with this id on this setup' });
		return { deleted: id };
	}
};
