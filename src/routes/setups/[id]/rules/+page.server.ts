// A setup's detector rules, rate models and change history for everyone; saving them for operators
// (through the JSON API, which validates with the same schema and refuses observers too).
import { fail, type RequestEvent } from '@sveltejs/kit';
import { hasRole } from '$lib/roles';
import { apiGet } from '$lib/ui/api';
import type { Run } from '$lib/ui/types';
import { rateDraftFromForm, rateMessageField, rateModelFromDraft, type RateModelHistoryRow, type SavedRateModel } from './rate-model-form';
import { draftFromForm, fromDraft, messageField, resolveSpecs, applyRowEdit, toDraft, type Draft } from './rules-form';
import type { Actions, PageServerLoad } from './$types';

export interface RuleChange {
	id: number | string;
	at: string;
	field: string;
	oldValue: unknown;
	newValue: unknown;
	actorName: string | null;
}

interface SetupDetail {
	setup: { id: string; name: string; order: number; states: number; modeGHz: number; nominalMK: number };
	runs: Run[];
}

const base = (id: string) => `/api/setups/${encodeURIComponent(id)}`;

export const load: PageServerLoad = async ({ fetch, params }) => {
	const [detail, rules, models] = await Promise.all([
		apiGet<SetupDetail>(fetch, base(params.id)),
		apiGet<{ rules: Record<string, unknown>; history: RuleChange[] }>(fetch, `${base(params.id)}/rules`),
		apiGet<{ rateModel: SavedRateModel | null; escapeModel: SavedRateModel | null; history: RateModelHistoryRow[] }>(
			fetch,
			`${base(params.id)}/rate-model`
		)
	]);
	const { id, name, order, states, modeGHz, nominalMK } = detail.setup;
	return {
		setup: { id, name, order, states, modeGHz, nominalMK },
		// Finished runs to try other rules on (the replay page starts from these rules).
		endedRuns: detail.runs.filter((r) => r.status === 'ended').slice(0, 5),
		rules: rules.rules,
		history: rules.history,
		rateModels: { switching: models.rateModel, escape: models.escapeModel },
		rateHistory: models.history
	};
};

/** PUT with a JSON body through event.fetch (the session cookie goes along); never throws on a refusal. */
async function put<T>(event: RequestEvent, path: string, body: unknown): Promise<{ ok: boolean; status: number; data: T | null; message: string }> {
	let res: Response;
	try {
		res = await event.fetch(path, {
			method: 'PUT',
			headers: { 'content-type': 'application/json', accept: 'application/json' },
			body: JSON.stringify(body)
		});
	} catch (e) {
		return { ok: false, status: 503, data: null, message: `The server could not be reached (${(e as Error).message}).` };
	}
	const json = (await res.json().catch(() => null)) as (T & { message?: string }) | null;
	return { ok: res.ok, status: res.status, data: res.ok ? json : null, message: json?.message ?? (res.ok ? '' : `The server answered ${res.status}.`) };
}

function operatorOnly(event: RequestEvent, intent: string) {
	if (!hasRole(event.locals.user?.role, 'operator')) {
		return fail(403, { intent, message: 'Changing rules and rate models needs the operator role; observers can read them.' });
	}
	return null;
}

export const actions: Actions = {
	saveRules: async (event) => {
		const denied = operatorOnly(event, 'saveRules');
		if (denied) return denied;
		const form = await event.request.formData();
		const { rules: current } = await apiGet<{ rules: Record<string, unknown> }>(event.fetch, `${base(event.params.id)}/rules`);
		const specs = resolveSpecs(current);
		const draft: Draft = draftFromForm(form, specs, toDraft(current, specs));

		// Without JavaScript, adding or removing a list row is a round trip that saves nothing.
		if (applyRowEdit(form, specs, draft)) return { intent: 'saveRules', draft, edited: true };

		const { rules, issues } = fromDraft(draft, specs);
		const first = Object.entries(issues)[0];
		if (first) return fail(400, { intent: 'saveRules', draft, field: first[0], message: first[1] });

		const res = await put<{ rules: Record<string, unknown>; changes: unknown[] }>(event, `${base(event.params.id)}/rules`, rules);
		if (!res.ok || !res.data) {
			const named = messageField(res.message, draft, specs);
			return fail(res.status === 200 ? 500 : res.status, { intent: 'saveRules', draft, field: named.field, message: named.text });
		}
		return { intent: 'saveRules', saved: res.data.changes.length };
	},

	saveRateModel: async (event) => {
		const denied = operatorOnly(event, 'saveRateModel');
		if (denied) return denied;
		const form = await event.request.formData();
		const process = form.get('process') === 'escape' ? 'escape' : 'switching';
		const draft = rateDraftFromForm(form);
		const { body, issues } = rateModelFromDraft(process, draft);
		if (!body) {
			const [field, message] = Object.entries(issues)[0];
			return fail(400, { intent: 'saveRateModel', process, rateDraft: draft, field, message });
		}
		const res = await put<{ rateModel: SavedRateModel }>(event, `${base(event.params.id)}/rate-model`, body);
		if (!res.ok) {
			const named = rateMessageField(res.message);
			return fail(res.status, { intent: 'saveRateModel', process, rateDraft: draft, field: named.field, message: named.text });
		}
		return { intent: 'saveRateModel', process, savedModel: true };
	}
};
