// Frames from an acquisition script: NDJSON, one frame per line, from a file (read once or followed
// like `tail -f`) or from a stream such as stdin. Bad lines are reported and skipped, never sent.
import fs from 'node:fs';
import readline from 'node:readline';
import type { Readable } from 'node:stream';
import { checkFrameAgainstRun, describeZodError, frameSchema, type Frame } from '../src/lib/protocol/index.ts';

export type LineResult = { ok: true; frame: Frame } | { ok: false; message: string };

/**
 * Parses one line as a frame of a run with `states` phase states. Returns null for a blank line.
 * The message of a rejected line names the field, as the server's `error` would.
 */
export function parseFrameLine(line: string, states: number): LineResult | null {
	const text = line.trim();
	if (text === '') return null;
	let json: unknown;
	try {
		json = JSON.parse(text);
	} catch (err) {
		return { ok: false, message: `not valid JSON (${(err as Error).message})` };
	}
	const parsed = frameSchema.safeParse(json);
	if (!parsed.success) return { ok: false, message: describeZodError(parsed.error) };
	const problem = checkFrameAgainstRun(parsed.data, states);
	if (problem) return { ok: false, message: `${problem.path}: ${problem.message}` };
	return { ok: true, frame: parsed.data };
}

export interface NumberedLine {
	/** 1-based line number in the input. */
	lineNo: number;
	line: string;
}

/** Lines of a stream (stdin, a pipe) until it ends or `signal` aborts. */
export async function* streamLines(input: Readable, signal?: AbortSignal): AsyncGenerator<NumberedLine> {
	const rl = readline.createInterface({ input, crlfDelay: Infinity });
	const stop = () => rl.close();
	signal?.addEventListener('abort', stop, { once: true });
	let lineNo = 0;
	try {
		for await (const line of rl) yield { lineNo: ++lineNo, line };
	} finally {
		signal?.removeEventListener('abort', stop);
		rl.close();
	}
}

export interface FileLinesOptions {
	/** Keep reading as the file grows, until `signal` aborts. */
	follow?: boolean;
	signal?: AbortSignal;
	/** How often a followed file is checked for growth when no change event arrives. */
	pollMs?: number;
	/** Told when a followed file shrinks (it is then read again from its start). */
	onTruncate?: () => void;
}

/**
 * Lines of a file. Without `follow` it reads to the end (a last line without a newline counts);
 * with `follow` it waits for more, holds back a partial last line until its newline arrives,
 * and ends only when `signal` aborts.
 */
export async function* fileLines(file: string, options: FileLinesOptions = {}): AsyncGenerator<NumberedLine> {
	const { follow = false, signal, pollMs = 500 } = options;
	const handle = await fs.promises.open(file, 'r');
	const chunk = Buffer.alloc(64 * 1024);
	let position = 0;
	let carry = '';
	let lineNo = 0;
	const decoder = new TextDecoder('utf-8');
	try {
		for (;;) {
			if (signal?.aborted) return;
			const { bytesRead } = await handle.read(chunk, 0, chunk.length, position);
			if (bytesRead > 0) {
				position += bytesRead;
				carry += decoder.decode(chunk.subarray(0, bytesRead), { stream: true });
				const parts = carry.split('\n');
				carry = parts.pop() ?? '';
				for (const part of parts) yield { lineNo: ++lineNo, line: part.replace(/\r$/, '') };
				continue;
			}
			if (!follow) {
				carry += decoder.decode();
				if (carry !== '') yield { lineNo: ++lineNo, line: carry };
				return;
			}
			const { size } = await handle.stat();
			if (size < position) {
				// Truncated or replaced in place: like tail, start again from the top.
				options.onTruncate?.();
				position = 0;
				carry = '';
				lineNo = 0;
				continue;
			}
			await waitForChange(file, pollMs, signal);
		}
	} finally {
		await handle.close();
	}
}

function waitForChange(file: string, pollMs: number, signal?: AbortSignal): Promise<void> {
	return new Promise((resolve) => {
		let watcher: fs.FSWatcher | null = null;
		const done = () => {
			clearTimeout(timer);
			watcher?.close();
			watcher = null;
			signal?.removeEventListener('abort', done);
			resolve();
		};
		const timer = setTimeout(done, pollMs);
		try {
			watcher = fs.watch(file, { persistent: false }, done);
			watcher.on('error', () => {});
		} catch {
			// Some file systems cannot be watched; the poll timer still fires.
		}
		signal?.addEventListener('abort', done, { once: true });
	});
}
