import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { readLines } from '../../../src/lib/transfer/read-lines';

function streamOf(chunks: (string | Uint8Array)[]): ReadableStream<Uint8Array> {
	const enc = new TextEncoder();
	return new ReadableStream({
		start(c) {
			for (const ch of chunks) c.enqueue(typeof ch === 'string' ? enc.encode(ch) : ch);
			c.close();
		}
	});
}

async function collect(stream: ReadableStream<Uint8Array>, max = 1000) {
	const out = [];
	for await (const l of readLines(stream, max)) out.push(l);
	return out;
}

describe('readLines', () => {
	it('numbers lines across chunk boundaries, drops CR of CRLF, keeps a last line without newline', async () => {
		expect(await collect(streamOf(['ab', 'c\r\nde', 'f\n\ng']))).toEqual([
			{ line: 1, text: 'abc' },
			{ line: 2, text: 'def' },
			{ line: 3, text: '' },
			{ line: 4, text: 'g' }
		]);
	});

	it('decodes a multi-byte character split between chunks', async () => {
		const bytes = new TextEncoder().encode('µs\n');
		expect(await collect(streamOf([bytes.slice(0, 1), bytes.slice(1)]))).toEqual([{ line: 1, text: 'µs' }]);
	});

	it('reports a line over the limit as null and goes on with the next', async () => {
		const lines = await collect(streamOf(['x'.repeat(6), 'x'.repeat(6), '\nok\n']), 10);
		expect(lines).toEqual([
			{ line: 1, text: null },
			{ line: 2, text: 'ok' }
		]);
	});

	it('gives the same lines as String.split for any chunking (property)', async () => {
		await fc.assert(
			fc.asyncProperty(fc.array(fc.string({ unit: fc.constantFrom('a', 'b', '\n', 'é') }), { maxLength: 8 }), async (parts) => {
				const whole = parts.join('');
				const expected = whole.split('\n');
				if (expected.at(-1) === '') expected.pop();
				const got = await collect(streamOf(parts));
				expect(got.map((l) => l.text)).toEqual(expected);
			})
		);
	});
});
