// One setup: details, runs, members and (for operators) its agent tokens and webhooks, created and
// revoked here through the same services and role checks as the JSON API.
import { error, fail as kitFail } from '@sveltejs/kit';
import { fail, message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { hasRole } from '$lib/roles';
import { listUsers, personExists } from '$lib/server/auth/users';
import { requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { listRuns } from '$lib/server/runs/service';
import { addMember, getSetup, listMembers, removeMember, setRawRetention } from '$lib/server/setups/service';
import { createAgentToken, listAgentTokens, revokeAgentToken } from '$lib/server/setups/tokens';
import { addWebhook, listWebhooks, removeWebhook } from '$lib/server/webhooks/service';
import { agentTokenSchema, memberSchema, newWebhookSchema, retentionSchema } from '$lib/setups/forms';
import type { Person } from '$lib/ui/types';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

const tokenForm = () => superValidate(zod4(agentTokenSchema), { id: 'createToken' });
const webhookForm = () => superValidate(zod4(newWebhookSchema), { id: 'addWebhook' });
const memberForm = () => superValidate(zod4(memberSchema), { id: 'addMember' });
const retentionForm = (days: number | null) =>
	superValidate({ rawRetentionDays: days }, zod4(retentionSchema), { id: 'setRetention', errors: false });

export const load: PageServerLoad = async (event) => {
	const user = requireRole(event, 'observer');
	const operator = hasRole(user.role, 'operator');
	const { db } = await getRuntime();
	const setup = await getSetup(db, event.params.id);
	if (!setup) error(404, 'no setup with this id');
	const [runs, tokens, members, people, webhooks, newToken, newWebhook, retention, newMember] = await Promise.all([
		listRuns(db, { setup: setup.id }),
		operator ? listAgentTokens(db, setup.id) : Promise.resolve([]),
		listMembers(db, setup.id),
		// The list of accounts is for admins only; an operator who is not admin gets no picker.
		user.role === 'admin' ? listUsers(db) : Promise.resolve(null),
		operator ? listWebhooks(db, setup.id) : Promise.resolve([]),
		tokenForm(),
		webhookForm(),
		retentionForm(setup.rawRetentionDays),
		memberForm()
	]);
	// better-auth keeps role as nullable text; the people shown are the ones the role column names.
	return {
		setup,
		runs: runs.slice(0, 50),
		tokens,
		members: members as Person[],
		people: people as Person[] | null,
		webhooks,
		tokenForm: newToken,
		webhookForm: newWebhook,
		retentionForm: retention,
		memberForm: newMember
	};
};

function operatorOnly(event: RequestEvent, intent: string) {
	if (!hasRole(event.locals.user?.role, 'operator')) return kitFail(403, { intent, message: 'This needs the operator role.' });
	return null;
}

/** The acting operator and the setup, or why the action cannot go on. */
async function operatorAndSetup(event: RequestEvent) {
	const user = event.locals.user;
	if (!user || !hasRole(user.role, 'operator')) return { ok: false as const, status: 403 as const, text: 'This needs the operator role.' };
	const { db } = await getRuntime();
	if (!(await getSetup(db, event.params.id))) return { ok: false as const, status: 404 as const, text: 'This setup no longer exists.' };
	return { ok: true as const, user, db };
}

export const actions: Actions = {
	addWebhook: async (event) => {
		const form = await superValidate(event.request, zod4(newWebhookSchema), { id: 'addWebhook' });
		const ctx = await operatorAndSetup(event);
		if (!ctx.ok) return message(form, ctx.text, { status: ctx.status });
		if (!form.valid) return fail(400, { form });
		const added = await addWebhook(ctx.db, event.params.id, form.data, ctx.user.id);
		// The signing secret is shown in this response only.
		return { form, intent: 'addWebhook', webhookSecret: added.secret, webhook: added.webhook };
	},
	removeWebhook: async (event) => {
		const denied = operatorOnly(event, 'removeWebhook');
		if (denied) return denied;
		const hookId = (await event.request.formData()).get('hookId');
		if (typeof hookId !== 'string' || !hookId)
			return kitFail(400, { intent: 'removeWebhook', message: 'The form did not say which webhook (field "hookId").' });
		const { db } = await getRuntime();
		if (!(await removeWebhook(db, event.params.id, hookId)))
			return kitFail(404, { intent: 'removeWebhook', message: 'no webhook with this id on this setup' });
		return { intent: 'removeWebhook', removed: hookId };
	},
	setRetention: async (event) => {
		const form = await superValidate(event.request, zod4(retentionSchema), { id: 'setRetention' });
		if (!hasRole(event.locals.user?.role, 'operator')) return message(form, 'This needs the operator role.', { status: 403 });
		if (!form.valid) return fail(400, { form });
		const { db } = await getRuntime();
		const setup = await setRawRetention(db, event.params.id, form.data.rawRetentionDays);
		if (!setup) return message(form, 'This setup no longer exists.', { status: 404 });
		return message(form, 'Saved.');
	},
	createToken: async (event) => {
		const form = await superValidate(event.request, zod4(agentTokenSchema), { id: 'createToken' });
		const ctx = await operatorAndSetup(event);
		if (!ctx.ok) return message(form, ctx.text, { status: ctx.status });
		if (!form.valid) return fail(400, { form });
		const { token, secret } = await createAgentToken(ctx.db, event.params.id, form.data.label, ctx.user.id);
		// Returned once, in this response only: it is never stored in the clear and not shown again.
		return { form, intent: 'createToken', secret, token };
	},
	revokeToken: async (event) => {
		const denied = operatorOnly(event, 'revokeToken');
		if (denied) return denied;
		const tokenId = (await event.request.formData()).get('tokenId');
		if (typeof tokenId !== 'string' || !tokenId)
			return kitFail(400, { intent: 'revokeToken', message: 'The form did not say which token (field "tokenId").' });
		const { db, ingest } = await getRuntime();
		const token = await revokeAgentToken(db, event.params.id, tokenId, event.locals.user!.id);
		if (!token) return kitFail(404, { intent: 'revokeToken', message: 'no active token with this id on this setup' });
		ingest.closeToken(token.id);
		return { intent: 'revokeToken', revoked: tokenId };
	},
	addMember: async (event) => {
		const form = await superValidate(event.request, zod4(memberSchema), { id: 'addMember' });
		const ctx = await operatorAndSetup(event);
		if (!ctx.ok) return message(form, ctx.text, { status: ctx.status });
		if (!form.valid) return fail(400, { form });
		if (!(await personExists(ctx.db, form.data.userId))) return setError(form, 'userId', 'no such person');
		await addMember(ctx.db, event.params.id, form.data.userId);
		return { form };
	},
	removeMember: async (event) => {
		const denied = operatorOnly(event, 'removeMember');
		if (denied) return denied;
		const userId = (await event.request.formData()).get('userId');
		if (typeof userId !== 'string' || !userId)
			return kitFail(400, { intent: 'removeMember', message: 'The form did not say whom to remove.' });
		const { db } = await getRuntime();
		if (!(await getSetup(db, event.params.id))) return kitFail(404, { intent: 'removeMember', message: 'This setup no longer exists.' });
		await removeMember(db, event.params.id, userId);
		return { intent: 'removeMember' };
	}
};
