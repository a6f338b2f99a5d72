// `npm start` must start the server with the flags the demo, tests and benchmarks use
// (src/bin/server-flags.js), or production runs a server the benchmarks never measured.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { SERVER_NODE_FLAGS } from '../../../src/bin/server-flags.js';

describe('the server start flags', () => {
	it('are all on npm start, before the script', () => {
		const start: string = JSON.parse(readFileSync('package.json', 'utf8')).scripts.start;
		const words = start.split(/\s+/);
		expect(words[0]).toBe('node');
		const script = words.indexOf('src/bin/serve.js');
		expect(script).toBeGreaterThan(0);
		expect(SERVER_NODE_FLAGS.length).toBeGreaterThan(0);
		for (const flag of SERVER_NODE_FLAGS) {
			expect(words.indexOf(flag), flag).toBeGreaterThan(0);
			expect(words.indexOf(flag), flag).toBeLessThan(script);
		}
	});
});
