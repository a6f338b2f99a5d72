// agent/PROTOCOL.md stays true: its JSON examples pass the schemas the server uses, and its minimal
// client, run as written, streams a file to a stand-in server and ends the run.
import { spawn } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterEach, describe, expect, test } from 'vitest';
import {
	agentMessageSchema,
	checkFrameAgainstRun,
	frameSchema,
	helloSchema,
	serverMessageSchema
} from '../../../src/lib/protocol/index.ts';
import { simulateFrames } from '../../../agent/simulate.ts';
import { FakeServer } from './fake-server.ts';

const root = path.resolve(import.meta.dirname, '../../..');
const doc = fs.readFileSync(path.join(root, 'agent/PROTOCOL.md'), 'utf8');
const blocks = (lang: string) => [...doc.matchAll(new RegExp('```' + lang + '\\n([\\s\\S]*?)```', 'g'))].map((m) => m[1]);
const cleanups: (() => Promise<void> | void)[] = [];
afterEach(async () => {
	while (cleanups.length) await cleanups.pop()!();
});

describe('PROTOCOL.md', () => {
	test('every JSON example is a valid message or frame', () => {
		const examples = blocks('json').map((b) => JSON.parse(b));
		expect(examples.length).toBeGreaterThanOrEqual(7);
		const seen = new Set<string>();
		for (const ex of examples) {
			if (ex.type === 'hello') expect(helloSchema.safeParse(ex).success).toBe(true);
			else if (ex.type === 'frames' || ex.type === 'end') expect(agentMessageSchema.safeParse(ex).success).toBe(true);
			else if (ex.type) expect(serverMessageSchema.safeParse(ex).success).toBe(true);
			else {
				const parsed = frameSchema.safeParse(ex);
				expect(parsed.success).toBe(true);
				expect(checkFrameAgainstRun(parsed.data!, 6)).toBeNull();
			}
			seen.add(ex.type ?? 'frame');
		}
		expect([...seen].sort()).toEqual(['ack', 'end', 'error', 'frame', 'frames', 'hello', 'welcome']);
	});

	test('the minimal client streams a file and ends the run', { timeout: 20_000 }, async () => {
		const server = new FakeServer({ committed: [1, 2, 3] });
		const port = await server.start();
		cleanups.push(() => server.crash());
		const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'pw-doc-'));
		cleanups.push(() => fs.rmSync(dir, { recursive: true, force: true }));
		const [code] = blocks('js');
		// The temporary directory has no node_modules: point the import at this project's ws.
		const wsUrl = pathToFileURL(path.join(root, 'node_modules/ws/wrapper.mjs')).href;
		fs.writeFileSync(path.join(dir, 'client.mjs'), code.replace("from 'ws'", `from '${wsUrl}'`));
		const frames = [...simulateFrames({ seed: 2, startMs: 1.78e12, shots: 100, count: 620 })];
		fs.writeFileSync(path.join(dir, 'frames.ndjson'), frames.map((f) => JSON.stringify(f)).join('\n') + '\n');
		const child = spawn(process.execPath, ['client.mjs', `ws://127.0.0.1:${port}/api/agent/stream`, 'tok', 'frames.ndjson'], { cwd: dir });
		const exit = await new Promise<number | null>((resolve) => child.on('exit', resolve));
		expect(exit).toBe(0);
		// The server had 1..3 already (welcome.lastSeq = 3): the client sends 4..620 in two messages.
		expect(server.received[0]).toBe(4);
		expect(server.committed).toEqual(frames.map((f) => f.seq));
		expect(server.messages.filter((m) => m.type === 'frames').map((m) => m.frames)).toEqual([500, 117]);
		expect(server.ends).toEqual(['file sent']);
	});
});
