import { csvParseRows } from 'd3-dsv';
import { describe, expect, it } from 'vitest';
import { csvLines, frameCsvCells, frameCsvHeader } from '../../../src/lib/transfer/frame-csv';

const frame = {
	seq: 4,
	t: 1_796_000_004_000,
	window_s: 1,
	shots: 100,
	vacuum: 4,
	counts: [48, 47],
	lock: 0.9,
	switches: 1,
	dwell_s: 0.9,
	escapes: 0,
	vacuum_s: 0.1,
	transitions: [0, 1, 0, 0],
	aux: { mxc_mK: 12.5 }
};

describe('frame CSV', () => {
	it('flattens counts, transitions (row = from) and aux into named columns', () => {
		const layout = { states: 2, transitions: true, auxNames: ['bias_uV', 'mxc_mK'] };
		const header = frameCsvHeader(layout);
		const cells = frameCsvCells(layout, { frame, receivedAt_ms: 1_796_000_005_000, late: false });
		expect(header.length).toBe(cells.length);
		const row = Object.fromEntries(header.map((h, i) => [h, cells[i]]));
		expect(row).toMatchObject({
			seq: 4,
			count_0: 48,
			count_1: 47,
			transition_0_1: 1,
			transition_1_0: 0,
			aux_mxc_mK: 12.5,
			aux_bias_uV: null,
			amp: null,
			late: 'false'
		});
		// Checked with GNU date: `date -u -d @1796000004` prints 2026-11-30T00:53:24.
		expect(row.time_utc).toBe('2026-11-30T00:53:24.000Z');
	});

	it('leaves transition cells empty for a frame without them, and quotes per RFC 4180', () => {
		const layout = { states: 2, transitions: true, auxNames: [] };
		const { transitions: _t, ...bare } = frame;
		const cells = frameCsvCells(layout, { frame: bare, receivedAt_ms: 0, late: true });
		expect(cells.slice(14, 18)).toEqual([null, null, null, null]);
		const text = csvLines([['a,b', 'say "hi"', null, 3]]);
		expect(text).toBe('"a,b","say ""hi""",,3\n');
		expect(csvParseRows(text.trimEnd())).toEqual([['a,b', 'say "hi"', '', '3']]);
	});
});
