// Replay of a stored run with other rules: starts from the setup's rules in force; the action replays
// the rules to try through the replay service, which reads the frames and changes nothing real.
import { error, fail } from '@sveltejs/kit';
import { requireRole } from '$lib/server/http/guard';
import { listIncidents } from '$lib/server/incidents/service';
import { currentRateModel } from '$lib/server/models/rate-models';
import { ReplayRefused, replayRunFor } from '$lib/server/replay/replay-run';
import { getSetupRules } from '$lib/server/rules/service';
import { getRuntime } from '$lib/server/runtime';
import { getRun, listFrames } from '$lib/server/runs/service';
import { getSetup } from '$lib/server/setups/service';
import {
	draftFromForm,
	fromDraft,
	resolveSpecs,
	applyRowEdit,
	placeIssues,
	toDraft,
	type Draft
} from '../../../setups/[id]/rules/rules-form';
import type { ReplayResult } from './replay-view';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'observer');
	const { db } = await getRuntime();
	const run = await getRun(db, event.params.id);
	if (!run) error(404, 'no run with this id');
	const [setup, live, first, rules, switching, escape] = await Promise.all([
		getSetup(db, run.setupId),
		listIncidents(db, { run: run.id, sort: 'openedAt', order: 'desc', page: 1, pageSize: 200 }),
		listFrames(db, run.id, { from: 1, limit: 1 }),
		getSetupRules(db, run.setupId),
		currentRateModel(db, run.setupId, 'switching'),
		currentRateModel(db, run.setupId, 'escape')
	]);
	if (!setup) error(404, 'no setup with this id');
	const f = first[0] ?? null;
	return {
		run,
		setup: { id: setup.id, name: setup.name },
		liveIncidents: live.incidents.length,
		rules: rules as Record<string, unknown>,
		rateModels: { switching, escape },
		firstFrame: f ? { seq: f.seq, t: f.t, window_s: f.window_s } : null
	};
};

export const actions: Actions = {
	// Any signed-in person may replay: it saves nothing and opens nothing.
	replay: async (event) => {
		const user = requireRole(event, 'observer');
		const form = await event.request.formData();
		const { db } = await getRuntime();
		const run = await getRun(db, event.params.id);
		if (!run) error(404, 'no run with this id');
		const current = (await getSetupRules(db, run.setupId)) as Record<string, unknown>;
		const specs = resolveSpecs(current);
		const draft: Draft = draftFromForm(form, specs, toDraft(current, specs));

		// Without JavaScript, adding or removing a list row is a round trip that replays nothing.
		if (applyRowEdit(form, specs, draft)) return { draft, edited: true };

		const { rules, issues } = fromDraft(draft, specs);
		const first = Object.entries(issues)[0];
		if (first) return fail(400, { draft, field: first[0], message: first[1] });

		try {
			const result: ReplayResult = await replayRunFor(db, user.id, run.id, rules, event.request.signal);
			return { draft, result };
		} catch (err) {
			if (!(err instanceof ReplayRefused)) throw err;
			// Refused rules come with their field as data; put the message on that input.
			const placed = err.rule ? placeIssues([{ path: err.rule.path, message: err.rule.problem }], draft, specs) : {};
			const [field, message] = Object.entries(placed)[0] ?? [null, err.message];
			return fail(err.status, { draft, field, message });
		}
	}
};
