// One agent run from start to finish: open the spool, connect, feed frames from the input or the
// simulator, and end the run (or stop, keeping the spool) — the CLI's body, callable from tests.
import type { Readable } from 'node:stream';
import type { Frame } from '../src/lib/protocol/index.ts';
import { AGENT_NAME, AGENT_VERSION, type AgentConfig } from './args.ts';
import { AgentConnection, AgentStoppedError, type ConnectionOptions } from './connection.ts';
import { fileLines, parseFrameLine, streamLines, type NumberedLine } from './ndjson-source.ts';
import { createSimulator } from './simulate.ts';
import { Spool } from './spool.ts';

export interface RunAgentOptions {
	log?: (line: string) => void;
	/** Aborting stops the agent: queued frames are sent if possible, the spool is kept. */
	signal?: AbortSignal;
	/** Where `--input -` reads from. */
	stdin?: Readable;
	/** Overrides for the connection's timers and limits (tests use short ones). */
	connection?: Partial<Omit<ConnectionOptions, 'url' | 'token' | 'run' | 'agent' | 'spool'>>;
	/** A finite input file pauses while this many frames wait for an ack. */
	highWater?: number;
	/** Gathers input lines this long before spooling them together. */
	spoolBatchMs?: number;
	/** How often a status line is logged. */
	statusEveryMs?: number;
	/** Spool options (tests turn fsync off). */
	spoolSync?: boolean;
	now?: () => number;
}

/**
 * - 'ended': everything was acknowledged and the server ended the run;
 * - 'finished': the input is done and acknowledged, the run left open (--no-end);
 * - 'stopped': interrupted; unacknowledged frames stay in the spool for the next start.
 */
export type AgentOutcome = 'ended' | 'finished' | 'stopped';

export async function runAgent(config: AgentConfig, options: RunAgentOptions = {}): Promise<AgentOutcome> {
	const log = options.log ?? (() => {});
	const signal = options.signal ?? new AbortController().signal;
	const now = options.now ?? Date.now;
	const spool = Spool.open(config.spoolPath, { log, sync: options.spoolSync ?? true });
	if (spool.size > 0) {
		const first = spool.pending()[0].seq;
		log(
			`spool ${config.spoolPath} holds ${spool.size} unacknowledged frames from before (seq ${first}…${spool.highestSeq}); they go first`
		);
	}
	const conn = new AgentConnection({
		url: config.url,
		token: config.token,
		run: config.run,
		agent: `${AGENT_NAME}/${AGENT_VERSION}`,
		spool,
		log,
		...options.connection
	});
	const r = config.run;
	log(`run "${r.key}" (${r.name}): order ${r.order}, ${r.states} phase states, mode ${r.mode_GHz} GHz; connecting to ${config.url}`);
	conn.start();
	const status = setInterval(() => {
		log(`status: ${conn.framesSent} frames sent, acknowledged up to seq ${spool.acknowledgedSeq}, ${spool.size} in the spool`);
	}, options.statusEveryMs ?? 60_000);
	status.unref();

	const aborted = new Promise<'stopped'>((resolve) => {
		if (signal.aborted) resolve('stopped');
		signal.addEventListener('abort', () => resolve('stopped'), { once: true });
	});

	try {
		const work = config.simulate ? simulate(conn, spool, config, signal, now, log) : readInput(conn, config, options, signal, log);
		const outcome = await Promise.race([work.catch(stoppedAs), conn.failed, aborted]);
		if (outcome === 'stopped' || signal.aborted) {
			// Stop first: a source waiting for acks (end, back-pressure) is released by it.
			const stopping = conn.stop();
			await Promise.race([work.catch(() => {}), new Promise((r) => setTimeout(r, 2000))]);
			await stopping;
			log(`stopped; ${spool.size} unacknowledged frames kept in ${config.spoolPath}`);
			return 'stopped';
		}
		return outcome;
	} catch (err) {
		await conn.stop(0).catch(() => {});
		throw err;
	} finally {
		clearInterval(status);
		spool.close();
	}
}

function stoppedAs(err: unknown): 'stopped' {
	if (err instanceof AgentStoppedError) return 'stopped';
	throw err;
}

async function finish(conn: AgentConnection, config: AgentConfig, reason: string, log: (l: string) => void): Promise<AgentOutcome> {
	if (conn.unacked > 0) log(`waiting for the server to acknowledge ${conn.unacked} frames`);
	if (config.sendEnd) {
		await conn.end(reason);
		return 'ended';
	}
	await conn.whenDrained();
	await conn.stop();
	log('all frames acknowledged; the run stays open (--no-end)');
	return 'finished';
}

async function readInput(
	conn: AgentConnection,
	config: AgentConfig,
	options: RunAgentOptions,
	signal: AbortSignal,
	log: (l: string) => void
): Promise<AgentOutcome> {
	const input = config.input;
	if (!input) throw new Error('runAgent: no input configured');
	const fromStdin = input.file === '-';
	const label = fromStdin ? 'stdin' : input.file;
	// A finite file can wait for the server: after welcome, lines it already has are skipped early.
	const finiteFile = !fromStdin && !input.follow;
	if (finiteFile) await Promise.race([conn.whenWelcomed(), untilAbort(signal)]);
	if (signal.aborted) return 'stopped';

	let lines: AsyncGenerator<NumberedLine>;
	if (fromStdin) {
		if (!options.stdin) throw new Error('runAgent: --input - needs a stdin stream');
		lines = streamLines(options.stdin, signal);
	} else {
		lines = fileLines(input.file, {
			follow: input.follow,
			signal,
			onTruncate: () => log(`${label}: file truncated; reading it from the start`)
		});
	}
	const highWater = options.highWater ?? 20_000;
	const batchMs = options.spoolBatchMs ?? 20;
	let read = 0;
	let rejected = 0;
	let skipped = 0;
	let previousSeq = 0;
	let batch: Frame[] = [];
	let timer: NodeJS.Timeout | null = null;
	const flush = () => {
		if (timer) clearTimeout(timer);
		timer = null;
		if (batch.length === 0) return;
		const taken = conn.enqueue(batch);
		skipped += batch.length - taken;
		batch = [];
	};
	try {
		for await (const { lineNo, line } of lines) {
			if (signal.aborted) break;
			const result = parseFrameLine(line, config.run.states);
			if (result === null) continue;
			if (!result.ok) {
				rejected += 1;
				log(`${label} line ${lineNo}: ${result.message}; skipped`);
				continue;
			}
			read += 1;
			if (result.frame.seq <= previousSeq) {
				log(
					`${label} line ${lineNo}: seq ${result.frame.seq} is not above the previous ${previousSeq}; the server takes it for a duplicate`
				);
			}
			previousSeq = Math.max(previousSeq, result.frame.seq);
			batch.push(result.frame);
			if (batch.length >= 500) flush();
			else timer ??= setTimeout(flush, batchMs);
			if (finiteFile && conn.unacked >= highWater) {
				flush();
				await Promise.race([conn.whenBelow(highWater / 2), untilAbort(signal)]);
			}
		}
	} finally {
		flush();
	}
	if (signal.aborted) return 'stopped';
	log(
		`${label}: input finished; ${read} frames read, ${rejected} lines rejected` +
			(skipped ? `, ${skipped} skipped (the server or the spool had them already)` : '')
	);
	return finish(conn, config, 'input finished', log);
}

async function simulate(
	conn: AgentConnection,
	spool: Spool,
	config: AgentConfig,
	signal: AbortSignal,
	now: () => number,
	log: (l: string) => void
): Promise<AgentOutcome> {
	const sim = config.simulate;
	if (!sim) throw new Error('runAgent: no simulation configured');
	// Numbering continues after whatever the server or the spool already holds for this run key.
	const welcome = await Promise.race([conn.whenWelcomed(), untilAbort(signal)]);
	if (!welcome || signal.aborted) return 'stopped';
	const startSeq = Math.max(welcome.lastSeq, spool.highestSeq) + 1;
	const wallStart = now();
	const simulator = createSimulator({
		seed: sim.seed,
		startMs: wallStart,
		startSeq,
		window_s: sim.window_s,
		order: config.run.order,
		states: config.run.states,
		shots: sim.shots,
		loseLockAtMin: sim.loseLockAtMin,
		lockLossMin: sim.lockLossMin,
		iqBins: sim.iqBins
	});
	const windowMs = sim.window_s * 1000;
	const total = sim.durationMin === null ? Infinity : Math.max(1, Math.round((sim.durationMin * 60) / sim.window_s));
	log(
		`simulating from seq ${startSeq}: a window every ${sim.window_s} s at ${sim.speed}× speed; lock lost at minute ` +
			`${sim.loseLockAtMin} for ${sim.lockLossMin} min` +
			(total === Infinity ? '; until stopped' : `; ${total} windows`)
	);
	let emitted = 0;
	let wasLost = false;
	while (emitted < total && !signal.aborted) {
		// Frames due by now (in simulated time), at most one message's worth at once.
		const due = Math.min(total, Math.floor(((now() - wallStart) * sim.speed) / windowMs));
		const n = Math.min(500, due - emitted);
		if (n <= 0) {
			const nextAt = wallStart + ((emitted + 1) * windowMs) / sim.speed;
			await sleep(Math.max(1, nextAt - now()), signal);
			continue;
		}
		const frames: Frame[] = [];
		for (let i = 0; i < n; i++) {
			frames.push(simulator.next());
			const lost = simulator.isLockLost(simulator.elapsed_s - sim.window_s / 2);
			if (lost !== wasLost) {
				log(`simulated minute ${((simulator.elapsed_s - sim.window_s) / 60).toFixed(2)}: lock ${lost ? 'lost' : 'recovered'}`);
				wasLost = lost;
			}
		}
		conn.enqueue(frames);
		emitted += n;
		// Let acks and sends through between bursts.
		await new Promise((r) => setImmediate(r));
	}
	if (signal.aborted) return 'stopped';
	log(`simulation finished after ${emitted} windows (${((emitted * sim.window_s) / 60).toFixed(2)} simulated minutes)`);
	return finish(conn, config, 'simulation finished', log);
}

function untilAbort(signal: AbortSignal): Promise<null> {
	return new Promise((resolve) => {
		if (signal.aborted) return resolve(null);
		signal.addEventListener('abort', () => resolve(null), { once: true });
	});
}

function sleep(ms: number, signal: AbortSignal): Promise<void> {
	return new Promise((resolve) => {
		const timer = setTimeout(done, ms);
		function done() {
			clearTimeout(timer);
			signal.removeEventListener('abort', done);
			resolve();
		}
		signal.addEventListener('abort', done, { once: true });
	});
}
