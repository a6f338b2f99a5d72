// Reads a personal API token from `Authorization: Bearer pwp_…`. Other bearer values (agent tokens,
// which only the agent stream accepts) are not ours and fall through to the session cookie.
import type { SessionUser } from '../auth/session';
import type { Db } from '../db';
import { API_TOKEN_PREFIX, authenticateApiToken } from './api-tokens';

export type BearerResult = { kind: 'none' } | { kind: 'invalid' } | { kind: 'user'; user: SessionUser };

export async function personFromBearer(db: Db, headers: Headers): Promise<BearerResult> {
	const match = /^Bearer\s+(\S+)\s*$/i.exec(headers.get('authorization') ?? '');
	if (!match || !match[1].startsWith(API_TOKEN_PREFIX)) return { kind: 'none' };
	const found = await authenticateApiToken(db, match[1]);
	return found ? { kind: 'user', user: found.user } : { kind: 'invalid' };
}
