// The bare database process: opens a data folder with the app's openDatabase and idles, so its
// resident memory is what PGlite alone costs. Usage: node --import tsx bare-db.ts <data dir>;
// prints "ready" once open; SIGTERM closes the database and exits.
import { openDatabase } from '../../../src/lib/server/db';
import { migrationsDir } from './seed';

const dataDir = process.argv[2];
if (!dataDir) throw new Error('usage: bare-db.ts <data dir>');
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
