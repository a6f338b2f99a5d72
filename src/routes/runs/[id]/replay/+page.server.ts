// Replay of a stored run with other rules: starts from the setup's rules in force; the action sends
// the rules to try to the replay API, which reads the frames and changes nothing real.
import { fail } from '@sveltejs/kit';
import { apiGet, apiGetOptional, apiSend } from '$lib/ui/api';
import type { Frame, Incident, Run } from '$lib/ui/types';
import { draftFromForm, fromDraft, messageField, resolveSpecs, applyRowEdit, toDraft, type Draft } from '../../../setups/[id]/rules/rules-form';
import type { ReplayResult } from './replay-view';
import type { Actions, PageServerLoad } from './$types';

interface RunDetail {
	run: Run;
	setup: { id: string; name: string };
	incidents: Incident[];
}

async function rulesOf(fetch: typeof globalThis.fetch, setupId: string) {
	return (await apiGet<{ rules: Record<string, unknown> }>(fetch, `/api/setups/${encodeURIComponent(setupId)}/rules`)).rules;
}

export const load: PageServerLoad = async ({ fetch, params }) => {
	const id = encodeURIComponent(params.id);
	const [detail, first] = await Promise.all([
		apiGet<RunDetail>(fetch, `/api/runs/${id}`),
		apiGet<{ frames: Frame[] }>(fetch, `/api/runs/${id}/frames?from=1&limit=1`)
	]);
	const [rules, models] = await Promise.all([
		rulesOf(fetch, detail.run.setupId),
		apiGetOptional<{ rateModel: unknown; escapeModel: unknown }>(fetch, `/api/setups/${encodeURIComponent(detail.run.setupId)}/rate-model`)
	]);
	const f = first.frames[0] ?? null;
	return {
		run: detail.run,
		setup: { id: detail.setup.id, name: detail.setup.name },
		liveIncidents: detail.incidents.length,
		rules,
		rateModels: { switching: models?.rateModel ?? null, escape: models?.escapeModel ?? null },
		firstFrame: f ? { seq: f.seq, t: f.t, window_s: f.window_s } : null
	};
};

export const actions: Actions = {
	// Any signed-in person may replay: it saves nothing and opens nothing.
	replay: async (event) => {
		const form = await event.request.formData();
		const id = encodeURIComponent(event.params.id);
		const { run } = await apiGet<RunDetail>(event.fetch, `/api/runs/${id}`);
		const current = await rulesOf(event.fetch, run.setupId);
		const specs = resolveSpecs(current);
		const draft: Draft = draftFromForm(form, specs, toDraft(current, specs));

		// Without JavaScript, adding or removing a list row is a round trip that replays nothing.
		if (applyRowEdit(form, specs, draft)) return { draft, edited: true };

		const { rules, issues } = fromDraft(draft, specs);
		const first = Object.entries(issues)[0];
		if (first) return fail(400, { draft, field: first[0], message: first[1] });

		const res = await apiSend<ReplayResult>(event.fetch, `/api/runs/${id}/replay`, 'POST', { rules });
		if (!res.ok || !res.data) {
			if (res.status === 404 && !/run/i.test(res.message)) {
				return fail(503, { draft, field: null, message: 'Replay is not available on this server yet.' });
			}
			const named = messageField(res.message, draft, specs);
			return fail(res.status === 200 ? 500 : res.status, { draft, field: named.field, message: named.text });
		}
		return { draft, result: res.data };
	}
};
