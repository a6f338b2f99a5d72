// The run timeline: tracks at the resolution the view needs, marks, and the note form's action.
// Calls the services directly; the browser re-fetches /api/runs/:id/timeline when zoomed.
import { error, fail } from '@sveltejs/kit';
import { hasRole } from '$lib/roles';
import { annotationInputSchema } from '$lib/annotations/schema';
import { describeZodError } from '$lib/protocol/messages';
import { addAnnotation, AnnotationError, deleteAnnotation } from '$lib/server/annotations/service';
import { requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { getRun } from '$lib/server/runs/service';
import { getSetup } from '$lib/server/setups/service';
import { timelineMarks } from '$lib/server/timeline/marks';
import { runSpan, runTimeline } from '$lib/server/timeline/service';
import { viewFromParams } from '$lib/timeline/view';
import type { Actions, PageServerLoad } from './$types';

const TIMELINE_PAGE_POINTS = 600;

export const load: PageServerLoad = async (event) => {
	event.depends('pw:timeline');
	const user = requireRole(event, 'observer');
	const { db } = await getRuntime();
	const run = await getRun(db, event.params.id);
	if (!run) error(404, 'no run with this id');
	const view = viewFromParams(event.url.searchParams);
	const [setup, span, marks] = await Promise.all([getSetup(db, run.setupId), runSpan(db, run), timelineMarks(db, run)]);
	const timeline = await runTimeline(db, run, { ...(view ?? {}), points: TIMELINE_PAGE_POINTS });
	return {
		run: { id: run.id, name: run.name, key: run.key, states: run.states, status: run.status, setupId: run.setupId },
		setup: setup ? { id: setup.id, name: setup.name } : { id: run.setupId, name: 'setup' },
		span,
		view,
		timeline,
		marks,
		points: TIMELINE_PAGE_POINTS,
		canAnnotate: hasRole(user.role, 'operator'),
		userId: user.id
	};
};

export const actions: Actions = {
	annotate: async (event) => {
		const user = requireRole(event, 'operator');
		const form = await event.request.formData();
		const raw = Object.fromEntries([...form.entries()].filter(([, v]) => v !== ''));
		const parsed = annotationInputSchema.safeParse(raw);
		if (!parsed.success) return fail(400, { message: describeZodError(parsed.error), values: raw });
		const { db } = await getRuntime();
		const run = await getRun(db, event.params.id);
		if (!run) error(404, 'no run with this id');
		const note = await addAnnotation(db, run.id, user, parsed.data);
		return { added: note.id };
	},
	unannotate: async (event) => {
		const user = requireRole(event, 'operator');
		const id = Number((await event.request.formData()).get('id'));
		if (!Number.isInteger(id) || id < 1) return fail(400, { message: 'id: must be a positive whole number' });
		const { db } = await getRuntime();
		try {
			await deleteAnnotation(db, event.params.id, id, user.id);
		} catch (err) {
			if (err instanceof AnnotationError) return fail(err.status, { message: err.message });
			throw err;
		}
		return { removed: id };
	}
};
