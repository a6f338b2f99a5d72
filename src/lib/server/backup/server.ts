// Backup of a PostgreSQL server's database with PostgreSQL's own tools: pg_dump in its custom
// format (compressed, restorable table by table) while the app runs, and pg_restore into an
// empty database. The tools must be on PATH and match the server's major version.
import { spawn } from 'node:child_process';

function run(tool: string, args: string[]): Promise<void> {
	return new Promise((resolve, reject) => {
		const child = spawn(tool, args, { stdio: ['ignore', 'inherit', 'pipe'] });
		let stderr = '';
		child.stderr.on('data', (d) => (stderr += d));
		child.once('error', (err) =>
			reject(new Error(`${tool} could not be started (${err.message}); install PostgreSQL's client tools (Debian: postgresql-client)`))
		);
		child.once('exit', (code) => (code === 0 ? resolve() : reject(new Error(`${tool} failed (exit ${code}): ${stderr.trim()}`))));
	});
}

export function dumpServer(databaseUrl: string, outFile: string): Promise<void> {
	return run('pg_dump', ['--format=custom', '--no-owner', '--file', outFile, '--dbname', databaseUrl]);
}

export function restoreServer(dumpFile: string, databaseUrl: string): Promise<void> {
	// --exit-on-error: a database that is not empty fails loudly instead of being half merged.
	return run('pg_restore', ['--no-owner', '--exit-on-error', '--single-transaction', '--dbname', databaseUrl, dumpFile]);
}
