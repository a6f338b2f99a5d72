// Calls to the JSON API from loads and form actions (through event.fetch, so the session cookie passes).
import { error } from '@sveltejs/kit';

type Fetch = typeof fetch;

export interface ApiResult<T> {
	ok: boolean;
	status: number;
	data: T | null;
	message: string;
	issues?: unknown;
}

async function readBody(res: Response): Promise<any> {
	const text = await res.text();
	if (!text) return null;
	try {
		return JSON.parse(text);
	} catch {
		return { message: text.slice(0, 300) };
	}
}

/** GET for a load: returns the JSON, or throws the API's status and message as the page's error. */
export async function apiGet<T>(fetch: Fetch, path: string): Promise<T> {
	const res = await fetch(path, { headers: { accept: 'application/json' } });
	const body = await readBody(res);
	if (!res.ok) error(res.status, body?.message ?? `${path} answered ${res.status}`);
	return body as T;
}

/** Like apiGet, but a refusal (403) or absence (404) gives null instead of an error page. */
export async function apiGetOptional<T>(fetch: Fetch, path: string): Promise<T | null> {
	const res = await fetch(path, { headers: { accept: 'application/json' } });
	if (res.status === 403 || res.status === 404) return null;
	const body = await readBody(res);
	if (!res.ok) error(res.status, body?.message ?? `${path} answered ${res.status}`);
	return body as T;
}

/** A write for a form action: never throws on an API refusal, so the action can `fail` with its words. */
export async function apiSend<T>(fetch: Fetch, path: string, method: 'POST' | 'PATCH' | 'DELETE', body?: unknown): Promise<ApiResult<T>> {
	let res: Response;
	try {
		res = await fetch(path, {
			method,
			headers: body === undefined ? { accept: 'application/json' } : { 'content-type': 'application/json', accept: 'application/json' },
			body: body === undefined ? undefined : JSON.stringify(body)
		});
	} catch (e) {
		return { ok: false, status: 503, data: null, message: `The server could not be reached (${(e as Error).message}).` };
	}
	const json = await readBody(res);
	return {
		ok: res.ok,
		status: res.status,
		data: res.ok ? (json as T) : null,
		message: json?.message ?? (res.ok ? '' : `The server answered ${res.status}.`),
		issues: json?.issues
	};
}

/** A trimmed text field from a form, or undefined when empty. */
export function field(form: FormData, name: string): string | undefined {
	const v = form.get(name);
	if (typeof v !== 'string') return undefined;
	const t = v.trim();
	return t === '' ? undefined : t;
}
