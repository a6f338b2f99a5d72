// A calibration table from parse to fit: every bad line or the fit with the points it was made
// from, each with its exact Poisson interval, ready to draw and (once valid) to save.
import { fitActivation, type ActivationFit, type OperatingPoint } from '$lib/physics/activation';
import { parseCalibrationCsv, type CsvError } from '$lib/physics/calibration-csv';
import { noiseFactor } from '$lib/physics/occupation';
import { poissonInterval } from '$lib/stats/poisson';

/** Larger tables are refused before parsing; a calibration table is tens to thousands of rows. */
export const MAX_TABLE_BYTES = 512 * 1024;

export interface CalibrationPlotPoint {
	line: number;
	T_mK: number;
	/** Abscissa of the fit: s(op)/s(ref) ÷ (2n̄+1), or 1/(2n̄+1) without operating points. */
	x: number;
	count: number;
	exposure_s: number;
	rate: number;
	lower: number;
	upper: number;
}

export interface CalibrationOptions {
	process: 'switching' | 'escape';
	mode_GHz: number;
	nominal_mK: number;
	/** For an escape table without operating-point columns: the operating point A refers to. */
	reference?: OperatingPoint;
}

export type CalibrationOutcome =
	{ ok: true; fit: ActivationFit; points: CalibrationPlotPoint[]; hasOperatingPoints: boolean } | { ok: false; errors: CsvError[] };

/** Parses and fits; a table that parses but cannot be fitted comes back as one error on line 1. */
export function fitCalibrationTable(text: string, options: CalibrationOptions): CalibrationOutcome {
	if (text.length > MAX_TABLE_BYTES) {
		return { ok: false, errors: [{ line: 1, message: `the file is larger than ${MAX_TABLE_BYTES / 1024} KiB` }] };
	}
	const parsed = parseCalibrationCsv(text);
	if (!parsed.ok) return { ok: false, errors: parsed.errors };
	const hasOperatingPoints = parsed.points.some((p) => p.operatingPoint !== undefined);
	let fit: ActivationFit;
	try {
		fit = fitActivation(parsed.points, {
			process: options.process,
			mode_GHz: options.mode_GHz,
			nominal_mK: options.nominal_mK,
			reference: hasOperatingPoints || options.process === 'switching' ? undefined : options.reference
		});
	} catch (e) {
		return { ok: false, errors: [{ line: 1, message: `the table is valid but cannot be fitted: ${(e as Error).message}` }] };
	}
	if (!(fit.model.A >= 0)) {
		return {
			ok: false,
			errors: [
				{
					line: 1,
					message: `the fit gives a negative activation exponent (A = ${fit.model.A.toPrecision(3)}): the rate falls as the temperature rises, which this law cannot describe`
				}
			]
		};
	}
	const ref = fit.model.reference;
	const scale = (op: OperatingPoint) => (op.damping ** 2 + op.detuning ** 2) / op.drive ** 2;
	const lineNumbers = dataLineNumbers(text);
	const points = parsed.points.map((p, i) => {
		const T_mK = p.T_mK ?? options.nominal_mK;
		const ratio = p.operatingPoint && ref ? scale(p.operatingPoint) / scale(ref) : 1;
		const { lower, upper } = poissonInterval(p.count, 0.95);
		return {
			line: lineNumbers[i] ?? i + 2,
			T_mK,
			x: ratio / noiseFactor(options.mode_GHz, T_mK),
			count: p.count,
			exposure_s: p.exposure_s,
			rate: p.count / p.exposure_s,
			lower: lower / p.exposure_s,
			upper: upper / p.exposure_s
		};
	});
	return { ok: true, fit, points, hasOperatingPoints };
}

/** 1-based numbers of the non-blank lines after the header, in the order the parser reads them. */
function dataLineNumbers(text: string): number[] {
	const lines = text.replace(/^\uFEFF/, '').split(/\r\n|\n|\r/);
	const out: number[] = [];
	for (let i = 1; i < lines.length; i++) if (lines[i].trim() !== '') out.push(i + 1);
	return out;
}
