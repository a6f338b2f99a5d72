// Secrets handed to people (invitation links, API tokens): random, recognisable by prefix, stored as SHA-256.
import { randomBytes } from 'node:crypto';
import { hashToken } from '../setups/tokens';

export { hashToken };

export function newSecret(prefix: string): { secret: string; hash: string } {
	const secret = prefix + randomBytes(24).toString('base64url');
	return { secret, hash: hashToken(secret) };
}
