// A setup's detector rules, rate models and change history for everyone; saving them for operators.
// The loader and actions call the services the JSON API calls, with the same role checks, and the
// forms go through superforms with the schemas the API validates with.
import { error, fail, type RequestEvent } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { detectorRulesSchema } from '$lib/detect/rules';
import { hasRole } from '$lib/roles';
import { requireRole } from '$lib/server/http/guard';
import { currentRateModel, rateModelHistory, saveRateModel } from '$lib/server/models/rate-models';
import { getSetupRules, ruleHistory } from '$lib/server/rules/service';
import { listRuns } from '$lib/server/runs/service';
import { getRuntime } from '$lib/server/runtime';
import { getSetup } from '$lib/server/setups/service';
import { rateDraft, rateFormId, rateFormSchema, rateModelFromDraft, type Process, type RateModelHistoryRow } from './rate-model-form';
import { RULES_FORM_ID, saveRulesForm } from './save-rules.server';
import type { Actions, PageServerLoad } from './$types';

async function setupOr404(id: string) {
	const { db, ingest } = await getRuntime();
	const setup = await getSetup(db, id);
	if (!setup) error(404, 'no setup with this id');
	return { db, ingest, setup };
}

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'observer');
	const { db, setup } = await setupOr404(event.params.id);
	const [ended, rules, history, switching, escape, rateHistory] = await Promise.all([
		listRuns(db, { setup: setup.id, status: 'ended' }),
		getSetupRules(db, setup.id),
		ruleHistory(db, setup.id),
		currentRateModel(db, setup.id, 'switching'),
		currentRateModel(db, setup.id, 'escape'),
		rateModelHistory(db, setup.id)
	]);
	const { id, name, order, states, modeGHz, nominalMK } = setup;
	const rateForm = (process: Process, model: typeof switching) =>
		superValidate(rateDraft(process, model, setup), zod4(rateFormSchema), { id: rateFormId(process), errors: false });
	const [rulesForm, switchingForm, escapeForm] = await Promise.all([
		superValidate(rules, zod4(detectorRulesSchema), { id: RULES_FORM_ID, errors: false }),
		rateForm('switching', switching),
		rateForm('escape', escape)
	]);
	return {
		setup: { id, name, order, states, modeGHz, nominalMK },
		// Finished runs to try other rules on (the replay page starts from these rules).
		endedRuns: ended.slice(0, 5).map((r) => ({ id: r.id, name: r.name })),
		rules,
		history,
		rateModels: { switching, escape },
		rateHistory: rateHistory as RateModelHistoryRow[],
		rulesForm,
		rateForms: { switching: switchingForm, escape: escapeForm }
	};
};

const OPERATOR_ONLY = 'Changing rules and rate models needs the operator role; observers can read them.';
const mayOperate = (event: RequestEvent) => hasRole(event.locals.user?.role, 'operator');

export const actions: Actions = {
	saveRules: async (event) => {
		if (!mayOperate(event)) {
			const form = await superValidate(zod4(detectorRulesSchema), { id: RULES_FORM_ID });
			return message(form, OPERATOR_ONLY, { status: 403 });
		}
		const { db, ingest, setup } = await setupOr404(event.params.id);
		return saveRulesForm(event, { db, ingest, setup, actorId: event.locals.user!.id });
	},

	saveRateModel: async (event) => {
		const formData = await event.request.formData();
		const process: Process = formData.get('process') === 'escape' ? 'escape' : 'switching';
		const form = await superValidate(formData, zod4(rateFormSchema), { id: rateFormId(process) });
		if (!mayOperate(event)) return message(form, OPERATOR_ONLY, { status: 403 });
		if (!form.valid) return fail(400, { intent: 'saveRateModel' as const, process, form });
		const { db, ingest, setup } = await setupOr404(event.params.id);
		const { model, note } = rateModelFromDraft(form.data);
		await saveRateModel(db, setup.id, model, event.locals.user!.id, note);
		await ingest.runFactsChanged(setup.id);
		return { intent: 'saveRateModel' as const, process, form, savedModel: true };
	}
};
