// npm run user:add -- --email E --name N --role admin|operator|observer --password P
// Adds a person straight into the data directory (PHASEWARDEN_DATA); the server must be stopped.
import { parseArgs } from 'node:util';
import { addUser, newUserSchema } from '../lib/server/auth/users';
import { createAuth } from '../lib/server/auth/options';
import { loadAuthSecret } from '../lib/server/auth/secret';
import { readConfig } from '../lib/server/config';
import { lockDataDir, unlockDataDir } from '../lib/server/data-lock';
import { openConfiguredDatabase } from '../lib/server/db';

const { values } = parseArgs({
	options: { email: { type: 'string' }, name: { type: 'string' }, role: { type: 'string' }, password: { type: 'string' } }
});

const parsed = newUserSchema.safeParse(values);
if (!parsed.success) {
	for (const issue of parsed.error.issues) console.error(`--${issue.path.join('.')}: ${issue.message}`);
	console.error('usage: npm run user:add -- --email E --name N --role admin|operator|observer --password P');
	process.exit(2);
}

const config = readConfig();
// The embedded database is one process's; a PostgreSQL server takes any number of clients.
const embedded = !config.databaseUrl;
try {
	if (embedded) lockDataDir(config.dataDir);
} catch (err) {
	console.error(`${(err as Error).message} (or add people on the admin page while it runs)`);
	process.exit(1);
}
const { db, close } = await openConfiguredDatabase(config);
try {
	// No request comes in here; the base URL only silences better-auth's warning.
	const auth = createAuth({
		db,
		secret: loadAuthSecret(config.dataDir, config.authSecret),
		baseURL: config.origin ?? 'http://localhost:3000'
	});
	const user = await addUser(auth, parsed.data);
	console.log(`added ${user.email} (${parsed.data.role}) to ${embedded ? config.dataDir : 'the PostgreSQL server'}`);
} catch (err) {
	console.error(`could not add ${parsed.data.email}: ${(err as Error).message}`);
	process.exitCode = 1;
} finally {
	await close();
	if (embedded) unlockDataDir(config.dataDir);
}
