// Cross-site writes to the JSON API. SvelteKit's own CSRF check only covers form submissions, so a
// page elsewhere could still fetch() a write with the session cookie. A write must therefore name our
// origin (browsers always send Origin on non-GET requests) or carry a bearer token, which a browser
// never attaches by itself; and a body must be JSON, which no cross-site form can send unasked.
import { json, type Handle } from '@sveltejs/kit';
import { getRuntime } from '../runtime';

const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);
/** Routes that take file uploads as multipart/form-data (method, path pattern). */
const MULTIPART_ROUTES: [string, RegExp][] = [['POST', /^\/api\/setups\/[^/]+\/import$/]];

export interface WriteRequest {
	method: string;
	pathname: string;
	headers: Headers;
}

/** Why a write to the API is refused (403 or 415), or null when it may go on. */
export function apiWriteProblem(req: WriteRequest, expectedOrigin: string): { status: 403 | 415; message: string } | null {
	if (!req.pathname.startsWith('/api/') || SAFE_METHODS.has(req.method)) return null;
	const origin = req.headers.get('origin');
	const bearer = /^Bearer\s+\S/i.test(req.headers.get('authorization') ?? '');
	if (origin !== null && origin !== expectedOrigin) {
		return { status: 403, message: `cross-origin write refused: Origin ${origin} is not ${expectedOrigin}` };
	}
	if (origin === null && !bearer) {
		return { status: 403, message: 'write refused: no Origin header and no API token (scripts send Authorization: Bearer <token>)' };
	}
	if (!hasBody(req.headers)) return null;
	const type = (req.headers.get('content-type') ?? '').split(';')[0].trim().toLowerCase();
	if (type === 'application/json') return null;
	if (type === 'multipart/form-data' && MULTIPART_ROUTES.some(([m, p]) => m === req.method && p.test(req.pathname))) return null;
	return { status: 415, message: `Content-Type must be application/json, not ${type || 'missing'}` };
}

/** A bodyless write (DELETE, an action POST with nothing to say) has no content type to check. */
function hasBody(headers: Headers): boolean {
	const length = headers.get('content-length');
	return headers.has('transfer-encoding') || (length !== null && length !== '0');
}

export const guardApiWrites: Handle = async ({ event, resolve }) => {
	const { config } = await getRuntime();
	const problem = apiWriteProblem(
		{ method: event.request.method, pathname: event.url.pathname, headers: event.request.headers },
		config.origin ? new URL(config.origin).origin : event.url.origin
	);
	if (problem) return json({ message: problem.message }, { status: problem.status });
	return resolve(event);
};
