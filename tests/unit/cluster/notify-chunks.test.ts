// Cutting a message into NOTIFY-sized parts and joining them again. The limit checked is
// PostgreSQL's documented NOTIFY payload limit: "must be shorter than 8000 bytes"
// (https://www.postgresql.org/docs/current/sql-notify.html).
import { describe, expect, it } from 'vitest';
import { PartAssembler, splitMessage } from '../../../src/lib/server/cluster/notify-chunks';

const NOTIFY_LIMIT_BYTES = 8000;

describe('NOTIFY parts', () => {
	it('keeps a small message in one part', () => {
		const parts = splitMessage('a', 1, '{"x":1}');
		expect(parts).toHaveLength(1);
		expect(new PartAssembler().add(parts[0])).toEqual({ from: 'a', text: '{"x":1}' });
	});

	it('cuts a large message with multi-byte characters into parts under the limit and joins it back', () => {
		// ≈ 60 kB of text mixing 1-, 2-, 3- and 4-byte UTF-8 characters.
		const text = JSON.stringify(Array.from({ length: 3000 }, (_, i) => `f${i}·µ−😀|`));
		const parts = splitMessage('inst-1', 7, text);
		expect(parts.length).toBeGreaterThan(5);
		for (const p of parts) expect(Buffer.byteLength(p)).toBeLessThan(NOTIFY_LIMIT_BYTES);
		const assembler = new PartAssembler();
		const results = parts.map((p) => assembler.add(p));
		expect(results.slice(0, -1).every((r) => r === null)).toBe(true);
		expect(results.at(-1)).toEqual({ from: 'inst-1', text });
	});

	it('keeps messages from two senders apart when their parts interleave', () => {
		const a = splitMessage('a', 1, 'A'.repeat(20_000));
		const b = splitMessage('b', 1, 'B'.repeat(15_000));
		const assembler = new PartAssembler();
		const done: string[] = [];
		for (let i = 0; i < Math.max(a.length, b.length); i++) {
			for (const p of [a[i], b[i]]) {
				if (!p) continue;
				const r = assembler.add(p);
				if (r) done.push(`${r.from}:${r.text.length}`);
			}
		}
		expect(done.sort()).toEqual(['a:20000', 'b:15000']);
	});

	it('drops a message whose part went missing, and reads the next one whole', () => {
		const broken = splitMessage('a', 1, 'x'.repeat(20_000));
		const assembler = new PartAssembler();
		expect(assembler.add(broken[0])).toBeNull();
		expect(assembler.add(broken[2])).toBeNull();
		const next = splitMessage('a', 2, 'y'.repeat(9000));
		const results = next.map((p) => assembler.add(p));
		expect(results.at(-1)).toEqual({ from: 'a', text: 'y'.repeat(9000) });
	});

	it('names a malformed part', () => {
		expect(() => new PartAssembler().add('nonsense')).toThrow(/not a part/);
	});
});
