import { error } from '@sveltejs/kit';
import { checkRulesAgainstRun, detectorRulesSchema } from '$lib/detect/rules';
import { describeZodError } from '$lib/protocol/messages';
import { json, requireRole } from '$lib/server/http/guard';
import { getSetupRules, putSetupRules, ruleHistory } from '$lib/server/rules/service';
import { getRuntime } from '$lib/server/runtime';
import { getSetup } from '$lib/server/setups/service';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const { db } = await getRuntime();
	if (!(await getSetup(db, event.params.id))) error(404, 'no setup with this id');
	const [rules, history] = await Promise.all([getSetupRules(db, event.params.id), ruleHistory(db, event.params.id)]);
	return json({ rules, history });
};

/** Replaces the whole rule set (validated by the same schema as the form); applies to new frames. */
export const PUT: RequestHandler = async (event) => {
	const user = requireRole(event, 'operator');
	let body: unknown;
	try {
		body = await event.request.json();
	} catch {
		error(400, 'the request body is not valid JSON');
	}
	const { db, ingest } = await getRuntime();
	const setup = await getSetup(db, event.params.id);
	if (!setup) error(404, 'no setup with this id');
	const parsed = detectorRulesSchema.safeParse(body);
	const mismatch = parsed.success ? checkRulesAgainstRun(parsed.data, setup.states) : null;
	if (mismatch) error(400, `${mismatch.path}: ${mismatch.message}`);
	const result = await putSetupRules(db, event.params.id, body, user.id);
	if ('error' in result) error(400, describeZodError(result.error));
	await ingest.rulesChanged(event.params.id, result.rules);
	return json({ rules: result.rules, changes: result.changes });
};
