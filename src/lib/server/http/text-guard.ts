// Strings the database cannot hold (NUL, lone surrogates; see protocol/safe-text.ts) are refused with a
// 400 naming the field, for every JSON write and query to /api/* — the app's routes and better-auth's
// alike — so no route can forget it. Schemas add safeText() on their fields for the same reason.
import { json, type Handle } from '@sveltejs/kit';
import { textProblem } from '../../protocol/safe-text';

/** The first string (value or key) in parsed JSON that cannot be stored, with its path, or null. */
export function findUnstorableText(value: unknown, path = ''): { path: string; problem: string } | null {
	if (typeof value === 'string') {
		const problem = textProblem(value);
		return problem ? { path: path || '(body)', problem } : null;
	}
	if (Array.isArray(value)) {
		for (let i = 0; i < value.length; i++) {
			const found = findUnstorableText(value[i], `${path}[${i}]`);
			if (found) return found;
		}
		return null;
	}
	if (value && typeof value === 'object') {
		for (const [key, inner] of Object.entries(value)) {
			const keyPath = path ? `${path}.${key}` : key;
			const keyProblem = textProblem(key);
			if (keyProblem) return { path: `${keyPath} (name)`, problem: keyProblem };
			const found = findUnstorableText(inner, keyPath);
			if (found) return found;
		}
	}
	return null;
}

const refuse = ({ path, problem }: { path: string; problem: string }) => json({ message: `${path}: ${problem}` }, { status: 400 });

export const refuseUnstorableText: Handle = async ({ event, resolve }) => {
	if (!event.url.pathname.startsWith('/api/')) return resolve(event);
	for (const [name, value] of event.url.searchParams) {
		const found = findUnstorableText(value, name) ?? findUnstorableText(name, `${name} (name)`);
		if (found) return refuse(found);
	}
	const type = event.request.headers.get('content-type') ?? '';
	if (event.request.body && type.toLowerCase().startsWith('application/json')) {
		let body: unknown;
		try {
			body = await event.request.clone().json();
		} catch {
			return resolve(event); // malformed JSON: the route names that itself
		}
		const found = findUnstorableText(body);
		if (found) return refuse(found);
	}
	return resolve(event);
};
