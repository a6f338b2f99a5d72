// Command-line flags of phasewarden-agent, turned into a checked configuration (no I/O here).
import path from 'node:path';
import { parseArgs } from 'node:util';
import { runDescriptionSchema, type RunDescription } from '../src/lib/protocol/index.ts';

export const AGENT_NAME = 'phasewarden-agent';
export const AGENT_VERSION = '0.1.0';

export class UsageError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'UsageError';
	}
}

export interface SimulateConfig {
	window_s: number;
	speed: number;
	seed: number;
	loseLockAtMin: number;
	lockLossMin: number;
	/** Simulated minutes after which the run ends; null: until interrupted. */
	durationMin: number | null;
	shots: number;
	iqBins: number;
}

export interface AgentConfig {
	url: string;
	token: string;
	run: RunDescription;
	spoolPath: string;
	/** Exactly one of input and simulate is set. */
	input: { file: string | '-'; follow: boolean } | null;
	simulate: SimulateConfig | null;
	sendEnd: boolean;
}

export const USAGE = `phasewarden-agent ${AGENT_VERSION}: streams acquisition windows to a Phasewarden server

  npm run agent -- --url ws://HOST:PORT/api/agent/stream --token TOKEN --input FILE|-  [options]
  npm run agent -- --url ws://HOST:PORT/api/agent/stream --token TOKEN --simulate      [options]

Connection
  --url URL               the server's agent endpoint (ws:// or wss://)
  --token TOKEN           agent token of the setup (or env PHASEWARDEN_AGENT_TOKEN)
  --spool PATH            unacknowledged frames (default .phasewarden-agent/<run-key>.spool.ndjson)
Run
  --run-key KEY           the agent's stable name for the run; the same key resumes it
  --run-name NAME         shown in the app (default: the key)
  --order M               period multiplication M (default 3)
  --states K              phase states, M or 2M (default 2M)
  --mode-ghz F            oscillator mode frequency in GHz (default 5.0)
  --operating-point JSON  e.g. '{"pump_GHz":15.0,"bias_uV":18}'
Input
  --input FILE|-          NDJSON frames, one per line; - reads stdin
  --follow                keep reading FILE as it grows, like tail -f
  --no-end                do not end the run when the input is finished
Simulation
  --simulate              a locked period-tripled oscillator that loses lock and recovers
  --window-s S            window length (default 1)
  --speed N               simulated seconds per real second (default 1)
  --seed N                random seed (default 1)
  --lose-lock-at-min MIN  simulated minute the lock is lost (default 1.0)
  --lock-loss-min MIN     how long it stays lost (default 1.5)
  --duration-min MIN      end the run after this much simulated time (default: run until stopped)
  --shots N               shots per window (default 2000)
  --iq-bins N             add an N×N IQ histogram to each frame (default 0: none)
  --help                  this text
`;

function num(name: string, raw: string | undefined, fallback: number, check: (v: number) => boolean, expect: string): number {
	if (raw === undefined) return fallback;
	const v = Number(raw);
	if (raw.trim() === '' || !Number.isFinite(v) || !check(v)) throw new UsageError(`--${name}: expected ${expect}, got "${raw}"`);
	return v;
}

/** A run key made safe as a file name. */
export function spoolFileName(runKey: string): string {
	return `${runKey.replace(/[^A-Za-z0-9._-]/g, '_')}.spool.ndjson`;
}

function stamp(nowMs: number): string {
	return new Date(nowMs)
		.toISOString()
		.replace(/[-:]/g, '')
		.replace(/\.\d+Z$/, 'Z');
}

/**
 * Parses the flags. `env` supplies PHASEWARDEN_AGENT_TOKEN; `cwd` anchors the default spool;
 * `nowMs` names runs that get no --run-key. Throws UsageError naming the flag at fault.
 */
export function parseAgentArgs(
	argv: string[],
	env: Record<string, string | undefined> = {},
	cwd = '.',
	nowMs = Date.now()
): AgentConfig | 'help' {
	let values;
	try {
		({ values } = parseArgs({
			args: argv,
			strict: true,
			allowPositionals: false,
			options: {
				url: { type: 'string' },
				token: { type: 'string' },
				spool: { type: 'string' },
				'run-key': { type: 'string' },
				'run-name': { type: 'string' },
				order: { type: 'string' },
				states: { type: 'string' },
				'mode-ghz': { type: 'string' },
				'operating-point': { type: 'string' },
				input: { type: 'string' },
				follow: { type: 'boolean' },
				'no-end': { type: 'boolean' },
				simulate: { type: 'boolean' },
				'window-s': { type: 'string' },
				speed: { type: 'string' },
				seed: { type: 'string' },
				'lose-lock-at-min': { type: 'string' },
				'lock-loss-min': { type: 'string' },
				'duration-min': { type: 'string' },
				shots: { type: 'string' },
				'iq-bins': { type: 'string' },
				help: { type: 'boolean', short: 'h' }
			}
		}));
	} catch (err) {
		throw new UsageError((err as Error).message);
	}
	if (values.help) return 'help';

	const url = values.url;
	if (!url) throw new UsageError('--url is required (e.g. ws://localhost:5173/api/agent/stream)');
	if (!/^wss?:\/\//.test(url)) throw new UsageError(`--url: expected a ws:// or wss:// address, got "${url}"`);
	const token = values.token ?? env.PHASEWARDEN_AGENT_TOKEN;
	if (!token) throw new UsageError('--token is required (or set PHASEWARDEN_AGENT_TOKEN)');
	if (values.simulate && values.input !== undefined) throw new UsageError('give either --input or --simulate, not both');
	if (!values.simulate && values.input === undefined) throw new UsageError('give --input FILE (or - for stdin) or --simulate');
	if (values.follow && (values.input === undefined || values.input === '-')) throw new UsageError('--follow needs --input FILE');

	const order = num('order', values.order, 3, (v) => Number.isInteger(v) && v >= 2, 'an integer ≥ 2');
	const states = num('states', values.states, 2 * order, (v) => Number.isInteger(v) && v >= 2, 'an integer');
	const mode_GHz = num('mode-ghz', values['mode-ghz'], 5.0, (v) => v > 0, 'a frequency in GHz > 0');

	let operatingPoint: RunDescription['operatingPoint'];
	if (values['operating-point'] !== undefined) {
		try {
			operatingPoint = JSON.parse(values['operating-point']);
		} catch (err) {
			throw new UsageError(`--operating-point: not valid JSON (${(err as Error).message})`);
		}
	}

	let runKey = values['run-key'];
	if (!runKey) {
		if (values.simulate) runKey = `sim-${stamp(nowMs)}`;
		else if (values.input === '-') runKey = `stdin-${stamp(nowMs)}`;
		else runKey = path.basename(values.input as string).replace(/\.(nd)?jsonl?$/i, '') || 'input';
	}
	const candidate = {
		key: runKey,
		name: values['run-name'] ?? runKey,
		order,
		states,
		mode_GHz,
		...(operatingPoint === undefined ? {} : { operatingPoint })
	};
	const parsedRun = runDescriptionSchema.safeParse(candidate);
	if (!parsedRun.success) {
		const flag: Record<string, string> = {
			key: '--run-key',
			name: '--run-name',
			order: '--order',
			states: '--states',
			mode_GHz: '--mode-ghz',
			operatingPoint: '--operating-point'
		};
		const field = String(parsedRun.error.issues[0].path[0] ?? '');
		throw new UsageError(`${flag[field] ?? 'run'}: ${parsedRun.error.issues[0].message}`);
	}

	let simulate: SimulateConfig | null = null;
	if (values.simulate) {
		const dur = values['duration-min'];
		simulate = {
			window_s: num('window-s', values['window-s'], 1, (v) => v > 0, 'seconds > 0'),
			speed: num('speed', values.speed, 1, (v) => v > 0, 'a factor > 0'),
			seed: num('seed', values.seed, 1, Number.isInteger, 'an integer'),
			loseLockAtMin: num('lose-lock-at-min', values['lose-lock-at-min'], 1.0, (v) => v >= 0, 'minutes ≥ 0'),
			lockLossMin: num('lock-loss-min', values['lock-loss-min'], 1.5, (v) => v >= 0, 'minutes ≥ 0'),
			durationMin: dur === undefined ? null : num('duration-min', dur, 0, (v) => v > 0, 'minutes > 0'),
			shots: num('shots', values.shots, 2000, (v) => Number.isInteger(v) && v >= 1, 'an integer ≥ 1'),
			iqBins: num('iq-bins', values['iq-bins'], 0, (v) => Number.isInteger(v) && v >= 0 && v <= 64, 'an integer 0…64')
		};
	}

	return {
		url,
		token,
		run: parsedRun.data,
		spoolPath: values.spool ?? path.join(cwd, '.phasewarden-agent', spoolFileName(runKey)),
		input: values.input === undefined ? null : { file: values.input, follow: values.follow ?? false },
		simulate,
		sendEnd: !values['no-end']
	};
}
