// Puts the security headers on every response SvelteKit makes (pages, API, errors).
import type { Handle } from '@sveltejs/kit';
import { getRuntime } from '../runtime';
import { NON_PAGE_CSP, securityHeaders } from './security-headers.js';

export const addSecurityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	const { config } = await getRuntime();
	const headers = securityHeaders({ hsts: config.hsts });
	// Some responses (fetched ones, redirects) arrive with immutable headers; copy those once.
	const out = trySet(response, headers) ? response : copy(response);
	if (out !== response) trySet(out, headers);
	if (!out.headers.has('content-security-policy')) out.headers.set('content-security-policy', NON_PAGE_CSP);
	return out;
};

function trySet(response: Response, headers: Record<string, string>): boolean {
	try {
		for (const [name, value] of Object.entries(headers)) response.headers.set(name, value);
		return true;
	} catch {
		return false;
	}
}

function copy(response: Response): Response {
	return new Response(response.body, { status: response.status, statusText: response.statusText, headers: new Headers(response.headers) });
}
