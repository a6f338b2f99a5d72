import { building } from '$app/environment';
import { json, redirect, type Handle, type ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { svelteKitHandler } from 'better-auth/svelte-kit';
import { isRole } from '$lib/roles';
import { guardApiWrites } from '$lib/server/http/api-write-guard';
import { refuseOversizedBodies } from '$lib/server/http/body-limit';
import { addSecurityHeaders } from '$lib/server/http/headers-hook';
import { limitJsonSignIn, stampClientAddress } from '$lib/server/http/signin-guard';
import { refuseUnstorableText } from '$lib/server/http/text-guard';
import { handleAgentUpgrade } from '$lib/server/ingest/upgrade';
import { personFromBearer } from '$lib/server/people/bearer';
import { getRuntime } from '$lib/server/runtime';

const UPGRADE_KEY = Symbol.for('phasewarden.upgrade');

export const init: ServerInit = async () => {
	await getRuntime();
	// The production server (src/bin/serve.js) hands WebSocket upgrades to this bundle's ingest.
	(globalThis as Record<symbol, unknown>)[UPGRADE_KEY] = handleAgentUpgrade;
};

/** better-auth's own routes (/api/auth/*), then the person on locals: from an API token, else the session. */
const authentication: Handle = async ({ event, resolve }) => {
	const { auth, db } = await getRuntime();
	const bearer = await personFromBearer(db, event.request.headers);
	// A script whose token stopped working must hear so, not be treated as signed out and redirected.
	if (bearer.kind === 'invalid')
		return json({ message: 'this API token is unknown or revoked, or its person is deactivated' }, { status: 401 });
	if (bearer.kind === 'user') {
		event.locals.user = bearer.user;
		event.locals.sessionId = null;
		return resolve(event);
	}
	const result = await auth.api.getSession({ headers: event.request.headers });
	event.locals.user = result
		? {
				id: result.user.id,
				email: result.user.email,
				name: result.user.name,
				role: isRole(result.user.role) ? result.user.role : 'observer'
			}
		: null;
	event.locals.sessionId = result?.session.id ?? null;
	return svelteKitHandler({ event, resolve, auth, building });
};

// The service worker must load without a session: the browser fetches it on its own. One-tap
// acknowledge links (/ack/) carry their own signed authority and create no session.
const PUBLIC_PATHS = [
	'/signin',
	'/forgot-password',
	'/reset-password/',
	'/invite/',
	'/ack/',
	'/api/health',
	'/api/auth/',
	'/favicon.svg',
	'/_app/',
	'/robots.txt',
	'/service-worker.js'
];

/** Everything but sign-in needs a signed-in person; roles are checked in each route. */
const signedIn: Handle = async ({ event, resolve }) => {
	const path = event.url.pathname;
	if (event.locals.user || PUBLIC_PATHS.some((p) => path === p || path.startsWith(p))) return resolve(event);
	if (path.startsWith('/api/')) return json({ message: 'sign in first' }, { status: 401 });
	redirect(303, `/signin?next=${encodeURIComponent(path + event.url.search)}`);
};

// Headers first so every answer carries them, refusals included; the sign-in brake sits in front of better-auth.
export const handle = sequence(
	addSecurityHeaders,
	refuseOversizedBodies,
	stampClientAddress,
	guardApiWrites,
	refuseUnstorableText,
	limitJsonSignIn,
	authentication,
	signedIn
);
