// Role checks for API routes and form actions: every rule is enforced here, on the server.
import { error, json, type RequestEvent } from '@sveltejs/kit';
import type { z } from 'zod';
import { hasRole, type Role } from '$lib/roles';
import { describeZodError } from '$lib/protocol/messages';
import type { SessionUser } from '$lib/server/auth/session';

/** The signed-in person if their role suffices; 401 or 403 otherwise. */
export function requireRole(event: Pick<RequestEvent, 'locals'>, needed: Role): SessionUser {
	const user = event.locals.user;
	if (!user) error(401, 'sign in first');
	if (!hasRole(user.role, needed)) error(403, `this needs the ${needed} role; you are ${user.role}`);
	return user;
}

/** Parses a JSON body (empty allowed when the schema accepts {}), answering 400 with the field named. */
export async function readJson<T extends z.ZodType>(request: Request, schema: T): Promise<z.infer<T>> {
	const text = await request.text();
	let body: unknown = {};
	if (text.trim()) {
		try {
			body = JSON.parse(text);
		} catch {
			error(400, 'the request body is not valid JSON');
		}
	}
	const parsed = schema.safeParse(body);
	if (!parsed.success) error(400, describeZodError(parsed.error));
	return parsed.data;
}

export function parseQuery<T extends z.ZodType>(url: URL, schema: T): z.infer<T> {
	const parsed = schema.safeParse(Object.fromEntries(url.searchParams));
	if (!parsed.success) error(400, describeZodError(parsed.error));
	return parsed.data;
}

export { json };
