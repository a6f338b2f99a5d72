// parseCalibrationCsv: good tables parse; every bad line is listed by number and reason.
// The expected points below are read off the sample text by hand (RFC 4180 comma-separated rows
// with a header, quoted fields included).
import { describe, expect, it } from 'vitest';
import { parseCalibrationCsv } from '$lib/physics/calibration-csv';
import { fitActivation } from '$lib/physics/activation';

describe('parseCalibrationCsv', () => {
	it('parses a temperature table with CRLF, spaces, mixed case and a trailing newline', () => {
		const text = ' T_mK , Count,exposure_s\r\n12, 40, 600\r\n35,118,600.5\r\n80 ,1.2e3, 6e2\r\n';
		const result = parseCalibrationCsv(text);
		expect(result).toEqual({
			ok: true,
			points: [
				{ T_mK: 12, count: 40, exposure_s: 600 },
				{ T_mK: 35, count: 118, exposure_s: 600.5 },
				{ T_mK: 80, count: 1200, exposure_s: 600 }
			]
		});
	});

	it('accepts the alternative names and operating-point columns', () => {
		const text = [
			'temperature_mK,switches,exposure_s,detuning,damping,drive',
			'20,15,300,0.1,0.5,1.2',
			'20,9,300,-0.1,0.5,1.3',
			'',
			'60,44,300,0,0.5,1.2'
		].join('\n');
		const result = parseCalibrationCsv(text);
		expect(result.ok).toBe(true);
		if (!result.ok) return;
		expect(result.points).toHaveLength(3);
		expect(result.points[1]).toEqual({
			T_mK: 20,
			count: 9,
			exposure_s: 300,
			operatingPoint: { detuning: -0.1, damping: 0.5, drive: 1.3 }
		});
		// The parsed points feed the fit directly (escape: operating points allowed).
		const fit = fitActivation(result.points, { mode_GHz: 5, process: 'escape' });
		expect(fit.model.reference).toEqual({ detuning: 0.1, damping: 0.5, drive: 1.2 });
	});

	it('accepts an operating-point table without temperatures', () => {
		const result = parseCalibrationCsv('count,exposure_s,detuning,damping,drive\n5,10,0,1,2\n');
		expect(result).toEqual({
			ok: true,
			points: [{ count: 5, exposure_s: 10, operatingPoint: { detuning: 0, damping: 1, drive: 2 } }]
		});
	});

	it('lists every bad line by its number and reason', () => {
		const text = [
			'T_mK,count,exposure_s', // 1
			'10,20,100', // 2 good
			'15,abc,100', // 3 non-numeric
			'20,-4,100', // 4 negative count
			'25,3.5,100', // 5 non-integer count
			'30,12,0', // 6 exposure ≤ 0
			'35,,100', // 7 missing value
			'40,12', // 8 wrong number of fields
			'-5,12,100', // 9 negative temperature
			'50,12,100', // 10 good
			'"55",12,100', // 11 good: a quoted field is a field (RFC 4180 §2.5)
			'60,1e999,100', // 12 overflows
			'x,-1,-1' // 13 three problems at once
		].join('\r\n');
		const result = parseCalibrationCsv(text);
		expect(result.ok).toBe(false);
		if (result.ok) return;
		const byLine = (line: number) => result.errors.filter((e) => e.line === line).map((e) => e.message);
		expect(result.errors.map((e) => e.line)).toEqual([3, 4, 5, 6, 7, 8, 9, 12, 13, 13, 13]);
		expect(byLine(3)).toEqual(['count is not a number: "abc"']);
		expect(byLine(4)[0]).toMatch(/count must not be negative/);
		expect(byLine(5)[0]).toMatch(/count must be a whole number, got 3.5/);
		expect(byLine(6)[0]).toMatch(/exposure_s must be > 0/);
		expect(byLine(7)[0]).toMatch(/missing value for count/);
		expect(byLine(8)[0]).toMatch(/expected 3 fields, found 2/);
		expect(byLine(9)[0]).toMatch(/temperature must not be negative/);
		expect(byLine(12)[0]).toMatch(/count is out of range/);
		expect(byLine(13)).toHaveLength(3);
	});

	it('reads quoted fields as RFC 4180 §2.5–2.7 has them, and counts line breaks inside quotes in line numbers', () => {
		const good = parseCalibrationCsv('"T_mK","count","exposure_s"\n"10",20,100\n15,"21",100\n');
		expect(good).toEqual({
			ok: true,
			points: [
				{ T_mK: 10, count: 20, exposure_s: 100 },
				{ T_mK: 15, count: 21, exposure_s: 100 }
			]
		});
		const text = ['T_mK,count,exposure_s', '"1,5",2,3', '"a', 'b",2,3', '9,x,3'].join('\n');
		const result = parseCalibrationCsv(text);
		expect(result.ok).toBe(false);
		if (result.ok) return;
		// line 2: a comma inside quotes stays in the field; lines 3–4: one row whose quoted field spans a line break; line 5 after it.
		expect(result.errors).toEqual([
			{ line: 2, message: 'T_mK is not a number: "1,5"' },
			{ line: 3, message: 'T_mK is not a number: "a\nb"' },
			{ line: 5, message: 'count is not a number: "x"' }
		]);
	});

	it('reports header problems on line 1', () => {
		const errors = (text: string) => {
			const r = parseCalibrationCsv(text);
			return r.ok ? [] : r.errors;
		};
		expect(errors('T_mK,exposure_s\n10,5')).toEqual([{ line: 1, message: 'missing required column count' }]);
		expect(errors('T_mK,count,exposure_s,flux\n10,5,1,2')[0].message).toMatch(/unknown column "flux"/);
		expect(errors('T_mK,count,temperature_mK,exposure_s\n1,2,3,4')[0].message).toMatch(/repeats T_mK/);
		expect(errors('count,exposure_s\n1,2')[0].message).toMatch(/temperature column/);
		expect(errors('T_mK,count,exposure_s,drive\n1,2,3,4')[0].message).toMatch(/missing detuning, damping/);
		expect(errors('')[0].message).toMatch(/header row/);
		expect(errors('T_mK,count,exposure_s\n\n')).toEqual([{ line: 1, message: 'the table has a header but no data rows' }]);
		expect(errors('T_mK,,exposure_s,count\n')[0].message).toMatch(/column 2 has an empty name/);
		// Data rows are not checked against a header that failed.
		expect(errors('T_mK,count\n-1,-1').every((e) => e.line === 1)).toBe(true);
	});
});
