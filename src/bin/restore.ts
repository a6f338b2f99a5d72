// npm run restore -- FILE: restores a backup into the database the configuration names, which
// must be new: an empty PHASEWARDEN_DATA folder, or an empty database at DATABASE_URL. Nothing
// existing is overwritten.
import { openAsBlob } from 'node:fs';
import { parseArgs } from 'node:util';
import { backupKindOf } from '../lib/server/backup/format';
import { restoreEmbedded } from '../lib/server/backup/embedded';
import { restoreServer } from '../lib/server/backup/server';
import { readConfig } from '../lib/server/config';
import { openConfiguredDatabase } from '../lib/server/db';

const USAGE = 'usage: npm run restore -- FILE   (into an empty PHASEWARDEN_DATA folder, or an empty database at DATABASE_URL)';
let file: string | undefined;
try {
	file = parseArgs({ allowPositionals: true, options: {} }).positionals[0];
} catch (err) {
	console.error(`${(err as Error).message}\n${USAGE}`);
	process.exit(2);
}
if (!file) {
	console.error(USAGE);
	process.exit(2);
}

const config = readConfig();
try {
	const kind = backupKindOf(file);
	if (kind === 'embedded') {
		if (config.databaseUrl)
			throw new Error('this is a dump of the embedded database; unset DATABASE_URL to restore it into PHASEWARDEN_DATA');
		await restoreEmbedded(await openAsBlob(file), config.dataDir, config.migrationsDir);
		console.log(`restored ${file} into ${config.dataDir}`);
	} else {
		if (!config.databaseUrl)
			throw new Error('this is a pg_dump of a PostgreSQL server; set DATABASE_URL to the (empty) database to restore it into');
		await restoreServer(file, config.databaseUrl);
		// A backup from an older release gets the newer migrations.
		const { close } = await openConfiguredDatabase(config);
		await close();
		console.log(`restored ${file} into the PostgreSQL database at DATABASE_URL`);
	}
} catch (err) {
	console.error(`restore failed: ${(err as Error).message}`);
	process.exit(1);
}
