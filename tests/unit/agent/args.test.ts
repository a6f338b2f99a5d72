// Command-line flags of phasewarden-agent: the defaults of the brief (order 3, six states, 5 GHz),
// derived run keys and spool paths, and refusals that name the flag.
import { describe, expect, test } from 'vitest';
import { parseAgentArgs, UsageError } from '../../../agent/args.ts';

const url = ['--url', 'ws://lab-pc:3000/api/agent/stream'];
const now = Date.UTC(2026, 0, 2, 3, 4, 5);
const parse = (args: string[], env: Record<string, string> = {}) => parseAgentArgs([...url, ...args], env, '/home/op', now);

describe('parseAgentArgs', () => {
	test('simulation defaults: M = 3, K = 6, 5.0 GHz, one window a second at real time', () => {
		const c = parse(['--token', 'tok', '--simulate']);
		expect(c).not.toBe('help');
		if (c === 'help') return;
		expect(c.run).toEqual({ key: 'sim-20260102T030405Z', name: 'sim-20260102T030405Z', order: 3, states: 6, mode_GHz: 5 });
		expect(c.simulate).toEqual({
			window_s: 1,
			speed: 1,
			seed: 1,
			loseLockAtMin: 1,
			lockLossMin: 1.5,
			durationMin: null,
			shots: 2000,
			iqBins: 0
		});
		expect(c.spoolPath).toBe('/home/op/.phasewarden-agent/sim-20260102T030405Z.spool.ndjson');
		expect(c.sendEnd).toBe(true);
	});

	test('an input file names the run after itself; the token may come from the environment', () => {
		const c = parse(['--input', '/data/cd14/run7.ndjson', '--follow', '--no-end'], { PHASEWARDEN_AGENT_TOKEN: 'env-tok' });
		if (c === 'help') throw new Error('unexpected help');
		expect(c.token).toBe('env-tok');
		expect(c.run.key).toBe('run7');
		expect(c.input).toEqual({ file: '/data/cd14/run7.ndjson', follow: true });
		expect(c.sendEnd).toBe(false);
	});

	test('run description flags, with an operating point', () => {
		const c = parse([
			'--token',
			't',
			'--input',
			'-',
			'--run-key',
			'cd14/run 7',
			'--order',
			'2',
			'--states',
			'2',
			'--mode-ghz',
			'7.25',
			'--operating-point',
			'{"bias_uV":18.2}'
		]);
		if (c === 'help') throw new Error('unexpected help');
		expect(c.run).toEqual({
			key: 'cd14/run 7',
			name: 'cd14/run 7',
			order: 2,
			states: 2,
			mode_GHz: 7.25,
			operatingPoint: { bias_uV: 18.2 }
		});
		expect(c.spoolPath).toBe('/home/op/.phasewarden-agent/cd14_run_7.spool.ndjson');
	});

	test.each<[string[], RegExp]>([
		[['--simulate'], /--token/],
		[['--token', 't'], /--input FILE .* or --simulate/],
		[['--token', 't', '--simulate', '--input', 'f'], /not both/],
		[['--token', 't', '--simulate', '--states', '5'], /--states: .*M.*2M/],
		[['--token', 't', '--simulate', '--speed', 'fast'], /--speed: expected a factor > 0, got "fast"/],
		[['--token', 't', '--simulate', '--operating-point', '{bias'], /--operating-point: not valid JSON/],
		[['--token', 't', '--input', '-', '--follow'], /--follow needs --input FILE/],
		[['--token', 't', '--simulate', '--bogus'], /bogus/]
	])('%j is refused: %s', (args, message) => {
		expect(() => parse(args)).toThrow(UsageError);
		expect(() => parse(args)).toThrow(message);
	});

	test('--url must be a WebSocket address', () => {
		expect(() => parseAgentArgs(['--url', 'http://x', '--token', 't', '--simulate'])).toThrow(/ws:\/\/ or wss:\/\//);
	});
});
