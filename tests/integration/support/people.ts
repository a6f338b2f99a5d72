// Helpers for the people tests: form posts as a browser without JavaScript sends them, signing in as
// anyone, and reading links out of the mail catcher.
import type { RunningServer } from './server';

/** A form action POST as a browser without JavaScript sends it (HTML wanted, so real statuses and redirects). */
export function postForm(server: RunningServer, pathname: string, fields: Record<string, string>, cookie?: string) {
	return fetch(`${server.url}${pathname}`, {
		method: 'POST',
		redirect: 'manual',
		headers: {
			'content-type': 'application/x-www-form-urlencoded',
			accept: 'text/html',
			origin: server.url,
			...(cookie ? { cookie } : {})
		},
		body: new URLSearchParams(fields).toString()
	});
}

export function cookieOf(res: Response): string {
	return res.headers
		.getSetCookie()
		.map((c) => c.split(';')[0])
		.join('; ');
}

export async function signInAs(server: RunningServer, email: string, password: string): Promise<{ status: number; cookie: string }> {
	const res = await fetch(`${server.url}/api/auth/sign-in/email`, {
		method: 'POST',
		headers: { 'content-type': 'application/json', origin: server.url },
		body: JSON.stringify({ email, password })
	});
	return { status: res.status, cookie: cookieOf(res) };
}

/** A JSON API call with a session cookie or an API token (scripts send no Origin header). */
export function call(server: RunningServer, pathname: string, auth: { cookie: string } | { token: string }, init: RequestInit = {}) {
	const headers: Record<string, string> = { 'content-type': 'application/json' };
	if ('cookie' in auth) Object.assign(headers, { cookie: auth.cookie, origin: server.url });
	else headers.authorization = `Bearer ${auth.token}`;
	return fetch(`${server.url}${pathname}`, { ...init, headers: { ...headers, ...((init.headers as Record<string, string>) ?? {}) } });
}

/** Waits for the newest message to `to` whose text holds a link to `pathPrefix`, and returns that path. */
export async function linkFromMail(
	server: RunningServer,
	readerCookie: string,
	to: string,
	pathPrefix: string,
	seen = new Set<string>()
): Promise<string> {
	const pattern = new RegExp(`${server.url.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}(${pathPrefix}[A-Za-z0-9_%-]+)`);
	for (let i = 0; i < 100; i++) {
		const res = await call(server, '/api/dev/mail', { cookie: readerCookie });
		const { messages } = (await res.json()) as { messages: { to: string[]; text?: string }[] };
		for (const m of [...messages].reverse()) {
			const path = m.to.includes(to) ? pattern.exec(m.text ?? '')?.[1] : undefined;
			if (path && !seen.has(path)) return path;
		}
		await new Promise((r) => setTimeout(r, 100));
	}
	throw new Error(`no mail to ${to} with a ${pathPrefix} link`);
}
