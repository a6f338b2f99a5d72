// The sign-in brake as the server applies it: the client's address (socket or trusted proxy), one
// limiter per process, the 429 answer, and the hook around better-auth's JSON sign-in route.
import type { Handle, RequestEvent } from '@sveltejs/kit';
import { CLIENT_ADDRESS_HEADER } from '../auth/options';
import { SignInLimiter, type Refusal } from '../auth/signin-limiter';
import { getRuntime } from '../runtime';
import { clientAddress } from './client-address';

export const JSON_SIGN_IN_PATH = '/api/auth/sign-in/email';

const KEY = Symbol.for('phasewarden.signinLimiter');
type Global = typeof globalThis & { [KEY]?: SignInLimiter };

export function signInLimiter(): SignInLimiter {
	const g = globalThis as Global;
	g[KEY] ??= new SignInLimiter();
	return g[KEY];
}

export async function requestAddress(event: Pick<RequestEvent, 'getClientAddress' | 'request'>): Promise<string> {
	const { config } = await getRuntime();
	return clientAddress(event.getClientAddress(), event.request.headers.get('x-forwarded-for'), config.trustedProxies);
}

export function tooManyAttempts(refusal: Refusal): Response {
	return new Response(JSON.stringify({ code: 'TOO_MANY_ATTEMPTS', message: refusal.message, retryAfter_s: refusal.retryAfter_s }), {
		status: 429,
		headers: { 'content-type': 'application/json', 'retry-after': String(refusal.retryAfter_s) }
	});
}

async function emailIn(request: Request): Promise<string> {
	try {
		const body = (await request.clone().json()) as { email?: unknown };
		return typeof body?.email === 'string' ? body.email : '';
	} catch {
		return '';
	}
}

/** Any client-sent copy of the header is replaced, so better-auth's limiter keys by the real address. */
export const stampClientAddress: Handle = async ({ event, resolve }) => {
	event.request.headers.set(CLIENT_ADDRESS_HEADER, await requestAddress(event));
	return resolve(event);
};

/** better-auth's JSON sign-in: refused while braked, and its answer counted (401 is a wrong password). */
export const limitJsonSignIn: Handle = async ({ event, resolve }) => {
	if (event.request.method !== 'POST' || event.url.pathname !== JSON_SIGN_IN_PATH) return resolve(event);
	const limiter = signInLimiter();
	const [email, address] = await Promise.all([emailIn(event.request), requestAddress(event)]);
	const refusal = await limiter.check(email, address);
	if (refusal) return tooManyAttempts(refusal);
	const response = await resolve(event);
	if (response.status === 401) await limiter.failed(email, address);
	else if (response.ok) await limiter.succeeded(email);
	return response;
};
