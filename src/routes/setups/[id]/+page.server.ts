// One setup: details, runs, members and (for operators) its agent tokens, created and revoked here.
import { fail } from '@sveltejs/kit';
import { hasRole } from '$lib/roles';
import { apiGet, apiGetOptional, apiSend, field } from '$lib/ui/api';
import { fieldError } from '$lib/ui/fields';
import { describeZodError } from '$lib/protocol/messages';
import { getRuntime } from '$lib/server/runtime';
import { retentionSchema, setRawRetention } from '$lib/server/setups/service';
import type { AgentToken, Person, Run, Webhook } from '$lib/ui/types';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

interface SetupDetail {
	setup: {
		id: string;
		name: string;
		description: string;
		order: number;
		states: number;
		modeGHz: number;
		nominalMK: number;
		rawRetentionDays: number | null;
		createdAt: string;
	};
	runs: Run[];
	tokens: AgentToken[];
	members: Person[];
}

export const load: PageServerLoad = async ({ fetch, params, locals }) => {
	const id = encodeURIComponent(params.id);
	const operator = hasRole(locals.user?.role, 'operator');
	const [detail, people, hooks] = await Promise.all([
		apiGet<SetupDetail>(fetch, `/api/setups/${id}`),
		// The people list is admin-only in the API; an operator who is not admin gets null and no picker.
		operator ? apiGetOptional<{ users: Person[] }>(fetch, '/api/users') : Promise.resolve(null),
		operator ? apiGetOptional<{ webhooks: Webhook[] }>(fetch, `/api/setups/${id}/webhooks`) : Promise.resolve(null)
	]);
	return { ...detail, people: people?.users ?? null, webhooks: hooks?.webhooks ?? [] };
};

function operatorOnly(event: RequestEvent, intent: string) {
	if (!hasRole(event.locals.user?.role, 'operator')) return fail(403, { intent, message: 'This needs the operator role.' });
	return null;
}

const base = (event: RequestEvent) => `/api/setups/${encodeURIComponent(event.params.id)}`;

export const actions: Actions = {
	addWebhook: async (event) => {
		const denied = operatorOnly(event, 'addWebhook');
		if (denied) return denied;
		const form = await event.request.formData();
		const url = field(form, 'url');
		if (!url) return fail(400, { intent: 'addWebhook', message: 'Enter the URL that receives the alerts.' });
		const res = await apiSend<{ webhook: Webhook; secret: string }>(event.fetch, `${base(event)}/webhooks`, 'POST', { url, label: field(form, 'label') ?? '' });
		if (!res.ok || !res.data) return fail(res.status, { intent: 'addWebhook', message: fieldError(res.message).text });
		// The signing secret is shown in this response only.
		return { intent: 'addWebhook', webhookSecret: res.data.secret, webhook: res.data.webhook };
	},
	removeWebhook: async (event) => {
		const denied = operatorOnly(event, 'removeWebhook');
		if (denied) return denied;
		const hookId = field(await event.request.formData(), 'hookId');
		if (!hookId) return fail(400, { intent: 'removeWebhook', message: 'The form did not say which webhook (field "hookId").' });
		const res = await apiSend(event.fetch, `${base(event)}/webhooks/${encodeURIComponent(hookId)}`, 'DELETE');
		if (!res.ok) return fail(res.status, { intent: 'removeWebhook', message: res.message });
		return { intent: 'removeWebhook', removed: hookId };
	},
	setRetention: async (event) => {
		const denied = operatorOnly(event, 'setRetention');
		if (denied) return denied;
		const parsed = retentionSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { intent: 'setRetention', message: describeZodError(parsed.error) });
		const { db } = await getRuntime();
		const setup = await setRawRetention(db, event.params.id, parsed.data.rawRetentionDays);
		if (!setup) return fail(404, { intent: 'setRetention', message: 'This setup no longer exists.' });
		return { intent: 'setRetention' };
	},
	createToken: async (event) => {
		const denied = operatorOnly(event, 'createToken');
		if (denied) return denied;
		const label = field(await event.request.formData(), 'label');
		if (!label) return fail(400, { intent: 'createToken', message: 'Give the token a label, e.g. the instrument PC it runs on.' });
		const res = await apiSend<{ token: AgentToken; secret: string }>(event.fetch, `${base(event)}/tokens`, 'POST', { label });
		if (!res.ok || !res.data) return fail(res.status, { intent: 'createToken', message: fieldError(res.message).text });
		// Returned once, in this response only: it is never stored in the clear and not shown again.
		return { intent: 'createToken', secret: res.data.secret, token: res.data.token };
	},
	revokeToken: async (event) => {
		const denied = operatorOnly(event, 'revokeToken');
		if (denied) return denied;
		const tokenId = field(await event.request.formData(), 'tokenId');
		if (!tokenId) return fail(400, { intent: 'revokeToken', message: 'The form did not say which token (field "tokenId").' });
		const res = await apiSend(event.fetch, `${base(event)}/tokens/${encodeURIComponent(tokenId)}`, 'DELETE');
		if (!res.ok) return fail(res.status, { intent: 'revokeToken', message: res.message });
		return { intent: 'revokeToken', revoked: tokenId };
	},
	addMember: async (event) => {
		const denied = operatorOnly(event, 'addMember');
		if (denied) return denied;
		const userId = field(await event.request.formData(), 'userId');
		if (!userId) return fail(400, { intent: 'addMember', message: 'Choose a person to add.' });
		const res = await apiSend(event.fetch, `${base(event)}/members`, 'POST', { userId });
		if (!res.ok) return fail(res.status, { intent: 'addMember', message: fieldError(res.message).text });
		return { intent: 'addMember' };
	},
	removeMember: async (event) => {
		const denied = operatorOnly(event, 'removeMember');
		if (denied) return denied;
		const userId = field(await event.request.formData(), 'userId');
		if (!userId) return fail(400, { intent: 'removeMember', message: 'The form did not say whom to remove.' });
		const res = await apiSend(event.fetch, `${base(event)}/members/${encodeURIComponent(userId)}`, 'DELETE');
		if (!res.ok) return fail(res.status, { intent: 'removeMember', message: res.message });
		return { intent: 'removeMember' };
	}
};
