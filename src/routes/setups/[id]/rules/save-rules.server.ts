// Saving the rules form. With JavaScript superforms posts the rules as JSON; without, the inputs are
// read into a draft and from it the same rules. Either way superValidate checks them with the one
// schema, then against the setup (state indices), and every problem is an error on its field's path.
import { fail, type RequestEvent } from '@sveltejs/kit';
import { setError, superValidate, type SuperValidated } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { checkRulesAgainstRun, detectorRulesSchema, type DetectorRules } from '$lib/detect/rules';
import type { Db } from '$lib/server/db';
import { getSetupRules, putSetupRules } from '$lib/server/rules/service';
import { resolveSpecs } from './resolve-specs';
import { fromDraft, toDraft, type Draft } from './rules-draft';
import { applyRowEdit, draftFromForm } from './rules-form-data';
import { toRulesPath } from './rules-validation';

export const RULES_FORM_ID = 'rules';

type RulesForm = SuperValidated<DetectorRules>;

/** Paths here come from the schema's own issues or the form's field keys, which setError's path type cannot follow. */
const addError = setError as (form: RulesForm, path: string, message: string) => unknown;

/** The rules a submitted form stands for, as a validated superform; null with a draft for a row edit. */
async function readRules(formData: FormData, db: Db, setupId: string): Promise<{ form: RulesForm | null; draft?: Draft }> {
	if (formData.has('__superform_json')) return { form: await superValidate(formData, zod4(detectorRulesSchema), { id: RULES_FORM_ID }) };
	const current = await getSetupRules(db, setupId);
	const specs = resolveSpecs(current);
	const draft = draftFromForm(formData, specs, toDraft(current, specs));
	// Without JavaScript, adding or removing a list row is a round trip that saves nothing.
	if (applyRowEdit(formData, specs, draft)) return { form: null, draft };
	const { rules, issues } = fromDraft(draft, specs);
	const form = await superValidate(rules as DetectorRules, zod4(detectorRulesSchema), { id: RULES_FORM_ID });
	// Text that is not even a value (not a number, not a pair) is an error of its own field.
	for (const [key, message] of Object.entries(issues)) addError(form, toRulesPath(key, draft, specs), message);
	return { form, draft };
}

export async function saveRulesForm(
	event: RequestEvent,
	ctx: {
		db: Db;
		ingest: { rulesChanged(setupId: string, rules: unknown): Promise<void> };
		setup: { id: string; states: number };
		actorId: string;
	}
) {
	const intent = 'saveRules' as const;
	const { form, draft } = await readRules(await event.request.formData(), ctx.db, ctx.setup.id);
	if (!form) return { intent, draft, edited: true };
	if (form.valid) {
		const mismatch = checkRulesAgainstRun(form.data, ctx.setup.states);
		if (mismatch) addError(form, mismatch.path, mismatch.message);
	}
	if (!form.valid) return fail(400, { intent, form, draft });
	const result = await putSetupRules(ctx.db, ctx.setup.id, form.data, ctx.actorId);
	if ('error' in result) {
		for (const issue of result.error.issues) addError(form, issue.path.join('.'), issue.message);
		return fail(400, { intent, form, draft });
	}
	await ctx.ingest.rulesChanged(ctx.setup.id, result.rules);
	return { intent, form, saved: result.changes.length };
}
