// Silences: listed for everyone signed in, created and ended early by operators and admins.
import { error } from '@sveltejs/kit';
import { asc, desc, eq } from 'drizzle-orm';
import { fail, message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { KIND_LABELS } from '$lib/incidents/kinds';
import { silenceSchema } from '$lib/alerting/silence-form';
import { hasRole } from '$lib/roles';
import { createSilence, endSilence, listSilences, SilenceError } from '$lib/server/alerting/silences';
import { runs, setups } from '$lib/server/db/schema';
import { requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, url }) => {
	const { db } = await getRuntime();
	const [list, setupRows, openRuns] = await Promise.all([
		listSilences(db),
		db.select({ id: setups.id, name: setups.name }).from(setups).orderBy(asc(setups.name)),
		db
			.select({ id: runs.id, name: runs.name, setupId: runs.setupId })
			.from(runs)
			.where(eq(runs.status, 'open'))
			.orderBy(desc(runs.startedAt))
	]);
	const form = await superValidate(
		{
			setupId: url.searchParams.get('setup') ?? setupRows[0]?.id ?? '',
			runId: url.searchParams.get('run') ?? '',
			kind: '',
			duration_min: 60,
			reason: ''
		},
		zod4(silenceSchema),
		{ errors: false }
	);
	return {
		silences: list,
		setups: setupRows,
		runs: openRuns,
		kinds: Object.entries(KIND_LABELS).map(([kind, label]) => ({ kind, label })),
		canEdit: hasRole(locals.user?.role, 'operator'),
		form
	};
};

export const actions: Actions = {
	create: async (event) => {
		const user = requireRole(event, 'operator');
		const form = await superValidate(event.request, zod4(silenceSchema));
		if (!form.valid) return fail(400, { form });
		const { db } = await getRuntime();
		try {
			await createSilence(db, form.data, user.id);
		} catch (err) {
			if (err instanceof SilenceError) return message(form, err.message, { status: err.status });
			throw err;
		}
		return message(form, 'Silenced.');
	},
	end: async (event) => {
		const user = requireRole(event, 'operator');
		const id = String((await event.request.formData()).get('id') ?? '');
		if (!id) error(400, 'which silence? the form sent no id');
		const { db } = await getRuntime();
		try {
			await endSilence(db, id, user.id);
		} catch (err) {
			if (err instanceof SilenceError) return fail(err.status, { endError: err.message });
			throw err;
		}
		return { ended: id };
	}
};
