// The auth secret: BETTER_AUTH_SECRET if set, else one generated on first start and kept in the data directory.
import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';

export function loadAuthSecret(dataDir: string, fromEnv: string | undefined): string {
	if (fromEnv) return fromEnv;
	const file = path.join(dataDir, 'auth-secret');
	if (existsSync(file)) return readFileSync(file, 'utf8').trim();
	mkdirSync(dataDir, { recursive: true });
	const secret = randomBytes(32).toString('base64url');
	writeFileSync(file, secret + '\n', { mode: 0o600 });
	return secret;
}
