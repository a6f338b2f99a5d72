// phasewarden-agent's entry point: `npm run agent -- --url … --token … --input FILE|- | --simulate`.
import { parseAgentArgs, USAGE, UsageError } from './args.ts';
import { AgentFatalError } from './connection.ts';
import { runAgent } from './run.ts';

const log = (line: string) => process.stderr.write(`${new Date().toISOString()} phasewarden-agent: ${line}\n`);

async function main(): Promise<number> {
	let config;
	try {
		config = parseAgentArgs(process.argv.slice(2), process.env, process.cwd());
	} catch (err) {
		if (!(err instanceof UsageError)) throw err;
		process.stderr.write(`phasewarden-agent: ${err.message}\n\n${USAGE}`);
		return 2;
	}
	if (config === 'help') {
		process.stdout.write(USAGE);
		return 0;
	}
	const controller = new AbortController();
	let signals = 0;
	const onSignal = (name: string) => {
		signals += 1;
		if (signals > 1) {
			log(`${name} again: exiting now; the spool is kept`);
			process.exit(130);
		}
		log(`${name}: sending what is queued, keeping the spool, then exiting`);
		controller.abort();
	};
	process.on('SIGINT', () => onSignal('SIGINT'));
	process.on('SIGTERM', () => onSignal('SIGTERM'));
	try {
		const outcome = await runAgent(config, { log, signal: controller.signal, stdin: process.stdin });
		log(outcome === 'ended' ? 'done: run ended' : outcome === 'finished' ? 'done: run left open' : 'exiting');
		return 0;
	} catch (err) {
		if (err instanceof AgentFatalError) {
			log(`fatal: ${err.message}`);
			return 1;
		}
		log(`fatal: ${(err as Error).stack ?? String(err)}`);
		return 1;
	}
}

main().then(
	(code) => process.exit(code),
	(err) => {
		log(`fatal: ${(err as Error).stack ?? String(err)}`);
		process.exit(1);
	}
);
