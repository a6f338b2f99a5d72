// A process that takes the data lock and holds it until killed (for data-lock.test.ts).
import { lockDataDir } from '../../src/lib/server/data-lock';

try {
	lockDataDir(process.argv[2]);
	console.log('locked');
	setInterval(() => {}, 1000);
} catch (e) {
	console.log(`refused: ${(e as Error).message}`);
}
