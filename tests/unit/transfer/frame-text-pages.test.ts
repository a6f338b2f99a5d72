// Export text written by the database (frame-text-pages.ts) against the JavaScript reference it
// replaced: frameCsvCells for CSV and JSON.stringify of the wire frame for NDJSON, on frames stored
// in a real PGlite through the project's migrations. Values are chosen to be awkward for number
// formatting (thirds, 0.1 + 0.2, 1e-5, 1e21, negatives) and cover every optional field.
import { randomUUID } from 'node:crypto';
import { csvParseRows } from 'd3-dsv';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { openDatabase, type Db } from '../../../src/lib/server/db';
import { frames, runs, setups } from '../../../src/lib/server/db/schema';
import { framePages } from '../../../src/lib/server/runs/frame-pages';
import { csvLineSql, frameTextPages, ndjsonLineSql } from '../../../src/lib/server/transfer/frame-text-pages';
import { csvLines, frameCsvCells, frameCsvHeader, type FrameCsvLayout } from '../../../src/lib/transfer/frame-csv';

vi.setConfig({ testTimeout: 120_000 });

const T0 = 1_800_000_000_123;
const N = 57; // not a multiple of the page size, so the last page is short
const AWKWARD = [1 / 3, 0.1 + 0.2, 1e-5, 1e21, -2.5, 0, 123456.789, 2 ** -30];
const pick = (i: number) => AWKWARD[i % AWKWARD.length];
const layout: FrameCsvLayout = { states: 3, transitions: true, auxNames: ['bias_uV', 'mxc_mK'] };
let db: Db;
let close: () => Promise<void>;
const runId = randomUUID();

beforeAll(async () => {
	({ db, close } = await openDatabase('memory://', 'drizzle'));
	const setupId = randomUUID();
	await db.insert(setups).values({ id: setupId, name: 'text pages', order: 3, states: 3, modeGHz: 6.2, nominalMK: 15 });
	await db.insert(runs).values({ id: runId, setupId, key: 'k', name: 'text pages', order: 3, states: 3, modeGHz: 6.2 });
	const rows = Array.from({ length: N }, (_, i) => {
		const seq = i + 1;
		return {
			runId,
			seq,
			t: T0 + seq * 997,
			windowS: pick(i) === 0 ? 1 : Math.abs(pick(i)),
			shots: 1000 + seq,
			vacuum: seq % 5,
			counts: [seq, 2 * seq, 3 * seq],
			lock: pick(i + 1),
			switches: seq % 4,
			dwellS: pick(i + 2),
			escapes: seq % 2,
			vacuumS: pick(i + 3),
			transitions: seq % 3 === 0 ? null : Array.from({ length: 9 }, (_, k) => (k * seq) % 7),
			amp: seq % 4 === 0 ? null : pick(i + 4),
			aux: (seq % 5 === 0 ? null : seq % 2 ? { mxc_mK: pick(i + 5) } : { bias_uV: 18.9, mxc_mK: 12.25 }) as Record<string, number> | null,
			iq: seq % 6 === 0 ? null : { bins: 2, extent: pick(i + 6) === 0 ? 3 : Math.abs(pick(i + 6)), counts: [seq, 0, 1, 2] },
			late: seq % 7 === 0,
			receivedAt: new Date(T0 + seq * 1003 + 250)
		};
	});
	await db.insert(frames).values(rows);
}, 120_000);
afterAll(async () => {
	await close();
});

async function allText(line: ReturnType<typeof csvLineSql>, firstRows: number, bytes = 1e9) {
	const pages: string[] = [];
	for await (const page of frameTextPages(db, runId, line, { afterSeq: 0, toSeq: N }, { firstRows, bytes, maxRows: firstRows }))
		pages.push(page);
	return pages;
}

async function reference() {
	const stored = [];
	for await (const page of framePages(db, runId)) stored.push(...page);
	return stored;
}

/** Same value: equal text, or both numbers that parse to the same double. */
function sameCell(sqlCell: string, jsCell: string) {
	if (sqlCell === jsCell) return true;
	return sqlCell !== '' && jsCell !== '' && Number(sqlCell) === Number(jsCell);
}

describe('frame text written by the database', () => {
	it('gives the CSV cells of frameCsvCells, page after page', async () => {
		const pages = await allText(csvLineSql(layout), 10);
		expect(pages).toHaveLength(6);
		const got = csvParseRows(pages.join('').trimEnd());
		const want = csvParseRows(csvLines((await reference()).map((s) => frameCsvCells(layout, s))).trimEnd());
		expect(got).toHaveLength(N);
		expect(got[0]).toHaveLength(frameCsvHeader(layout).length);
		const mismatches: string[] = [];
		got.forEach((row, r) =>
			row.forEach((cell, c) => {
				if (!sameCell(cell, want[r][c])) mismatches.push(`seq ${r + 1} ${frameCsvHeader(layout)[c]}: ${cell} vs ${want[r][c]}`);
			})
		);
		expect(mismatches).toEqual([]);
	});

	it('gives NDJSON lines that parse to the wire frames, keys in the wire order', async () => {
		const text = (await allText(ndjsonLineSql(), 25)).join('');
		const lines = text.split('\n');
		expect(lines.pop()).toBe('');
		const want = (await reference()).map((s) => s.frame);
		expect(lines).toHaveLength(N);
		lines.forEach((line, i) => {
			const parsed = JSON.parse(line);
			expect(parsed).toEqual(want[i]);
			expect(Object.keys(parsed)).toEqual(Object.keys(want[i]));
		});
	});

	it('stops at the range and honours the agent-time span', async () => {
		const text = (
			await (async () => {
				const pages: string[] = [];
				for await (const p of frameTextPages(
					db,
					runId,
					ndjsonLineSql(),
					{ afterSeq: 10, toSeq: 40, fromT: T0 + 20 * 997, toT: T0 + 30 * 997 },
					{ firstRows: 4, bytes: 1e9, maxRows: 4 }
				))
					pages.push(p);
				return pages;
			})()
		).join('');
		expect(
			text
				.trimEnd()
				.split('\n')
				.map((l) => JSON.parse(l).seq)
		).toEqual(Array.from({ length: 10 }, (_, i) => 20 + i));
	});

	it('sizes pages by their bytes once the first page shows how long a line is', async () => {
		const target = 2000;
		const pages: string[] = [];
		for await (const page of frameTextPages(db, runId, ndjsonLineSql(), { afterSeq: 0, toSeq: N }, { firstRows: 2, bytes: target }))
			pages.push(page);
		const lineCounts = pages.map((p) => p.split('\n').length - 1);
		expect(lineCounts.reduce((a, b) => a + b, 0)).toBe(N);
		expect(lineCounts[0]).toBe(2);
		// After the first page the row count follows the bytes: more rows than the first page's two,
		// and no page past the target by more than the longest line.
		expect(Math.max(...lineCounts.slice(1, -1))).toBeGreaterThan(2);
		const longestLine = Math.max(...pages.flatMap((p) => p.split('\n').map((l) => l.length + 1)));
		for (const page of pages.slice(1)) expect(page.length).toBeLessThan(target + 2 * longestLine);
	});
});
