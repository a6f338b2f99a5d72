// Reads an operator's calibration table (CSV with a header row) into calibration points, or
// lists every bad line by number and reason so nothing half-valid is ever stored.
// Rows come from d3-dsv (RFC 4180: quoted fields, commas and line breaks inside quotes).
import { csvParseRows } from 'd3-dsv';
import type { CalibrationPoint } from './activation';

export type CsvError = { line: number; message: string };
export type CalibrationCsvResult = { ok: true; points: CalibrationPoint[] } | { ok: false; errors: CsvError[] };

type Field = 'T_mK' | 'count' | 'exposure_s' | 'detuning' | 'damping' | 'drive';

const ALIASES: Record<string, Field> = {
	t_mk: 'T_mK',
	temperature_mk: 'T_mK',
	count: 'count',
	switches: 'count',
	exposure_s: 'exposure_s',
	detuning: 'detuning',
	damping: 'damping',
	drive: 'drive'
};

const OP_FIELDS = ['detuning', 'damping', 'drive'] as const;

// Plain decimal or scientific notation; rejects '', 'Infinity', '0x1f', '1e', '--1'.
const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

export function parseCalibrationCsv(text: string): CalibrationCsvResult {
	if (typeof text !== 'string') {
		return { ok: false, errors: [{ line: 1, message: 'the calibration table must be text' }] };
	}
	const rows = csvParseRows(text.replace(/^\uFEFF/, ''));
	const header = parseHeader(rows[0] ?? ['']);
	if (!header.ok) return { ok: false, errors: header.errors };
	const { columns } = header;

	const errors: CsvError[] = [];
	const points: CalibrationPoint[] = [];
	// A quoted field may hold line breaks, so a row's line number counts them in the rows before it.
	let line = 1 + lineBreaks(rows[0]) + 1;
	for (const cells of rows.slice(1)) {
		const lineNumber = line;
		line += 1 + lineBreaks(cells);
		// Blank lines carry no data.
		if (cells.every((cell) => cell.trim() === '')) continue;
		const parsed = parseRow(cells, lineNumber, columns);
		if (parsed.ok) points.push(parsed.point);
		else errors.push(...parsed.errors);
	}
	if (errors.length > 0) return { ok: false, errors };
	if (points.length === 0) {
		return { ok: false, errors: [{ line: 1, message: 'the table has a header but no data rows' }] };
	}
	return { ok: true, points };
}

const lineBreaks = (cells: string[]) => cells.reduce((n, cell) => n + (cell.match(/\r\n|\n|\r/g)?.length ?? 0), 0);

function parseHeader(cells: string[]): { ok: true; columns: Field[] } | { ok: false; errors: CsvError[] } {
	const fail = (message: string) => ({ ok: false as const, errors: [{ line: 1, message }] });
	if (cells.every((cell) => cell.trim() === '')) return fail('the first line must be a header row naming the columns');

	const names = cells.map((name) => name.trim());
	const columns: Field[] = [];
	const problems: string[] = [];
	for (const [index, name] of names.entries()) {
		const field = ALIASES[name.toLowerCase()];
		if (name === '') problems.push(`column ${index + 1} has an empty name`);
		else if (!field) {
			problems.push(`unknown column "${name}" (expected T_mK or temperature_mK, count or switches, exposure_s, detuning, damping, drive)`);
		} else if (columns.includes(field)) problems.push(`column "${name}" repeats ${field}`);
		columns.push(field);
	}
	for (const required of ['count', 'exposure_s'] as const) {
		if (!columns.includes(required)) problems.push(`missing required column ${required}`);
	}
	const opPresent = OP_FIELDS.filter((f) => columns.includes(f));
	if (opPresent.length > 0 && opPresent.length < OP_FIELDS.length) {
		const missing = OP_FIELDS.filter((f) => !columns.includes(f));
		problems.push(`operating-point columns come as a set: missing ${missing.join(', ')}`);
	}
	if (!columns.includes('T_mK') && opPresent.length === 0) {
		problems.push('give a temperature column (T_mK) or the operating-point columns (detuning, damping, drive)');
	}
	if (problems.length > 0) return { ok: false, errors: problems.map((message) => ({ line: 1, message })) };
	return { ok: true, columns };
}

function parseRow(
	row: string[],
	lineNumber: number,
	columns: Field[]
): { ok: true; point: CalibrationPoint } | { ok: false; errors: CsvError[] } {
	const errors: CsvError[] = [];
	const fail = (message: string) => errors.push({ line: lineNumber, message });
	const cells = row.map((cell) => cell.trim());
	if (cells.length !== columns.length) {
		fail(`expected ${columns.length} fields, found ${cells.length}`);
		return { ok: false, errors };
	}

	const values: Partial<Record<Field, number>> = {};
	for (const [index, cell] of cells.entries()) {
		const field = columns[index];
		if (cell === '') {
			fail(`missing value for ${field}`);
			continue;
		}
		const value = Number(cell);
		const problem = !NUMBER.test(cell)
			? `${field} is not a number: "${cell}"`
			: !Number.isFinite(value)
				? `${field} is out of range: "${cell}"`
				: checkValue(field, value);
		if (problem) fail(problem);
		else values[field] = value;
	}
	if (errors.length > 0) return { ok: false, errors };

	const point: CalibrationPoint = { count: values.count!, exposure_s: values.exposure_s! };
	if (values.T_mK !== undefined) point.T_mK = values.T_mK;
	if (columns.includes('drive')) {
		point.operatingPoint = {
			detuning: values.detuning!,
			damping: values.damping!,
			drive: values.drive!
		};
	}
	return { ok: true, point };
}

function checkValue(field: Field, value: number): string | null {
	switch (field) {
		case 'count':
			if (value < 0) return `count must not be negative, got ${value}`;
			if (!Number.isInteger(value)) return `count must be a whole number, got ${value}`;
			return null;
		case 'exposure_s':
			return value > 0 ? null : `exposure_s must be > 0, got ${value}`;
		case 'T_mK':
			return value >= 0 ? null : `temperature must not be negative, got ${value} mK`;
		case 'damping':
			return value >= 0 ? null : `damping must not be negative, got ${value}`;
		case 'drive':
			return value !== 0 ? null : 'drive must be non-zero';
		default:
			return null;
	}
}
