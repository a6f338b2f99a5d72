// npm run backup -- --out FILE: a backup of the database the configuration names. The embedded
// database is dumped while the server is stopped (it is one process's); a PostgreSQL server's is
// dumped with pg_dump at any time.
import { statSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { readConfig } from '../lib/server/config';
import { lockDataDir, unlockDataDir } from '../lib/server/data-lock';
import { dumpEmbedded } from '../lib/server/backup/embedded';
import { dumpServer } from '../lib/server/backup/server';

const USAGE = 'usage: npm run backup -- --out FILE';
let out: string | undefined;
try {
	out = parseArgs({ options: { out: { type: 'string' } } }).values.out;
} catch (err) {
	console.error(`${(err as Error).message}\n${USAGE}`);
	process.exit(2);
}
if (!out) {
	console.error(`--out is required\n${USAGE}`);
	process.exit(2);
}

const config = readConfig();
try {
	if (config.databaseUrl) {
		await dumpServer(config.databaseUrl, out);
	} else {
		lockDataDir(config.dataDir);
		try {
			await dumpEmbedded(config.dataDir, out);
		} finally {
			unlockDataDir(config.dataDir);
		}
	}
	console.log(`backup written to ${out} (${(statSync(out).size / 1e6).toFixed(1)} MB)`);
} catch (err) {
	const message = (err as Error).message;
	console.error(
		`backup failed: ${message}${/in use by process/.test(message) ? ' (the embedded database can be backed up only while the server is stopped)' : ''}`
	);
	process.exit(1);
}
