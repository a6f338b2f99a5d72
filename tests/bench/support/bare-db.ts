// The bare database process: opens a data folder with the app's openDatabase and idles, so its
// resident memory is what PGlite alone costs. Usage: bare-db <data dir> <migrations dir> (bundled by children.ts);
// prints "ready" once open; SIGTERM closes the database and exits.
import { openDatabase } from '../../../src/lib/server/db';

const [dataDir, migrationsDir] = process.argv.slice(2);
if (!dataDir || !migrationsDir) throw new Error('usage: bare-db <data dir> <migrations dir>');
const { db, close } = await openDatabase(dataDir, migrationsDir);
// One small query, as a server answers a health check: the catalogue is then loaded.
await db.execute('SELECT count(*) FROM frames');
console.log('ready');
const idle = setInterval(() => {}, 1 << 30);
process.on('SIGTERM', async () => {
	clearInterval(idle);
	await close();
	process.exit(0);
});
