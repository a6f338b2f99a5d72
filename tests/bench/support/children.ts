// Starts the benchmark's helper processes (raw baseline server, bare database) and waits for the
// line that says they are ready. Their TypeScript is bundled with esbuild (packages left external)
// and run by plain node, so no loader thread adds to their memory or start-up as tsx's would.
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import { build } from 'esbuild';
import { migrationsDir, repoRoot } from './seed';

export interface Child {
	pid: number;
	process: ChildProcess;
	/** The ready line the child printed. */
	readyLine: string;
	output: () => string;
	stop(): Promise<void>;
}

/** Inside the repository, so the bundle's bare imports resolve from its node_modules. */
const bundleDir = path.join(repoRoot, 'node_modules/.cache/phasewarden-bench');

async function bundle(script: string): Promise<string> {
	mkdirSync(bundleDir, { recursive: true });
	const outfile = path.join(bundleDir, script.replace(/\.ts$/, '.mjs'));
	await build({
		entryPoints: [path.join(import.meta.dirname, script)],
		outfile,
		bundle: true,
		platform: 'node',
		format: 'esm',
		target: 'node20',
		packages: 'external',
		logLevel: 'warning'
	});
	return outfile;
}

export async function startChild(script: string, args: string[], readyPattern: RegExp, what: string): Promise<Child> {
	const child = spawn(process.execPath, [await bundle(script), ...args], { cwd: repoRoot, stdio: ['ignore', 'pipe', 'pipe'] });
	let log = '';
	const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
	const readyLine = await new Promise<string>((resolve, reject) => {
		const timer = setTimeout(() => reject(new Error(`${what} not ready within 60 s:\n${log}`)), 60_000);
		child.stdout!.on('data', (d) => {
			log = (log + d).slice(-20_000);
			const line = log.split('\n').find((l) => readyPattern.test(l));
			if (line) {
				clearTimeout(timer);
				resolve(line);
			}
		});
		child.stderr!.on('data', (d) => (log = (log + d).slice(-20_000)));
		child.once('exit', (code) => {
			clearTimeout(timer);
			reject(new Error(`${what} exited (${code}) during start-up:\n${log}`));
		});
	});
	return {
		pid: child.pid!,
		process: child,
		readyLine,
		output: () => log,
		async stop() {
			if (child.exitCode === null) child.kill('SIGTERM');
			await exited;
		}
	};
}

/** The raw ceiling's INSERT: 'values' (multi-row VALUES, the default) or 'jsonb' (jsonb_to_recordset). */
export const RAW_INSERT = process.env.BENCH_RAW_INSERT || 'values';
export const RAW_BASELINE = `bare ws + JSON.parse + one ${RAW_INSERT === 'jsonb' ? 'jsonb_to_recordset' : 'multi-row VALUES'} INSERT per message into PGlite (opened by openDatabase), ack after commit`;

export interface RawServer extends Child {
	wsUrl: string;
}

/** The raw ceiling (see raw-server.ts) on its own copy of the seeded folder. */
export async function startRawServer(dataDir: string, setupId: string): Promise<RawServer> {
	const child = await startChild('raw-server.ts', [dataDir, migrationsDir, setupId, RAW_INSERT], /^listening \d+/, 'raw baseline server');
	const port = Number(child.readyLine.split(' ')[1]);
	return { ...child, wsUrl: `ws://127.0.0.1:${port}/` };
}

export function startBareDb(dataDir: string): Promise<Child> {
	return startChild('bare-db.ts', [dataDir, migrationsDir], /^ready/, 'bare database process');
}
