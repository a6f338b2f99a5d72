// One CSV row per frame: the wire frame flattened so a spreadsheet can read it. Quoting is left to
// d3-dsv (RFC 4180); this module only decides the columns, so it is pure and tested on its own.
import { csvFormatRows } from 'd3-dsv';
import type { Frame } from '../protocol/frame';

export interface FrameCsvLayout {
	/** K: one count_i column per phase state. */
	states: number;
	/** K·K transition_<from>_<to> columns when any stored frame carried transitions. */
	transitions: boolean;
	/** aux_<name> columns, in this order. */
	auxNames: readonly string[];
}

export interface CsvFrame {
	frame: Frame;
	receivedAt_ms: number;
	late: boolean;
}

export function frameCsvHeader(layout: FrameCsvLayout): string[] {
	const head = ['seq', 't_ms', 'time_utc', 'window_s', 'shots', 'vacuum'];
	for (let i = 0; i < layout.states; i++) head.push(`count_${i}`);
	head.push('lock', 'switches', 'dwell_s', 'escapes', 'vacuum_s', 'amp');
	if (layout.transitions) {
		for (let from = 0; from < layout.states; from++) for (let to = 0; to < layout.states; to++) head.push(`transition_${from}_${to}`);
	}
	for (const name of layout.auxNames) head.push(`aux_${name}`);
	head.push('late', 'received_utc');
	return head;
}

/** The row's cells; a field the frame lacks is an empty cell (null). */
export function frameCsvCells(layout: FrameCsvLayout, { frame: f, receivedAt_ms, late }: CsvFrame): (string | number | null)[] {
	const row: (string | number | null)[] = [f.seq, f.t, new Date(f.t).toISOString(), f.window_s, f.shots, f.vacuum];
	for (let i = 0; i < layout.states; i++) row.push(f.counts[i] ?? null);
	row.push(f.lock, f.switches, f.dwell_s, f.escapes, f.vacuum_s, f.amp ?? null);
	if (layout.transitions) {
		const n = layout.states * layout.states;
		for (let i = 0; i < n; i++) row.push(f.transitions?.[i] ?? null);
	}
	for (const name of layout.auxNames) row.push(f.aux?.[name] ?? null);
	row.push(late ? 'true' : 'false', new Date(receivedAt_ms).toISOString());
	return row;
}

/** Rows as CSV text, each line ending in a newline (so pages concatenate). */
export function csvLines(rows: readonly (readonly (string | number | null)[])[]): string {
	if (rows.length === 0) return '';
	return csvFormatRows(rows.map((r) => r.map((c) => (c === null ? '' : String(c))))) + '\n';
}
