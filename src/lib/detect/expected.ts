// Expected counts of one window from the run's rate models, at the window's own fridge temperature.
//
// W(T) = W0·exp(−A·s/(2n̄(f,T)+1)) is the activation law of physics/activation.ts (predictRate),
// evaluated here directly because it runs for every frame: predictRate is called once per model
// to validate it, and the tests check that both agree. s is the escape model's operating-point
// scale (γ²+δ²)/ε² relative to its reference (1 for switching, and for escape without both).
import type { Frame } from '../protocol/frame';
import { noiseFactor } from '../physics/occupation';
import { operatingPointScale, predictRate } from '../physics/activation';
import type { ParsedRunInfo } from './run-info';

/** The aux value that carries the mixing-chamber temperature, by the protocol's convention. */
export const TEMPERATURE_AUX = 'mxc_mK';

export type RateProcess = 'switching' | 'escape';
export const RATE_PROCESSES: readonly RateProcess[] = ['switching', 'escape'];

/** One process in one window. */
export type ProcessExpectation = {
	/** Events seen: `switches` or `escapes`. */
	count: number;
	/** Exposure: `dwell_s` or `vacuum_s`. */
	exposure_s: number;
	/** Predicted count at the window's temperature, W(T)·exposure. */
	expected: number;
	/** Predicted count at the nominal temperature, W(T_nominal)·exposure. */
	expectedNominal: number;
};

export type FrameExpectation = {
	/** Temperature the prediction used: aux.mxc_mK when the frame has a usable one, else nominal. */
	T_mK: number;
	/** Whether T_mK was measured in this window (false: the nominal temperature stood in). */
	measured: boolean;
	/** Null when the run has no model for the process. */
	switching: ProcessExpectation | null;
	escape: ProcessExpectation | null;
};

type CompiledModel = { W0_per_s: number; A_scaled: number; mode_GHz: number; nominal_mK: number; nominalRate_per_s: number };

/** Per-run constants of the prediction, derived from the run information (never stored). */
export type CompiledRates = {
	nominal_mK: number | null;
	switching: CompiledModel | null;
	escape: CompiledModel | null;
};

/** s(op)/s(reference) of an escape model at the run's operating point; 1 when either is unknown. */
export function scaleFor(run: ParsedRunInfo, model: NonNullable<NonNullable<ParsedRunInfo['rateModels']>['escape']>): number {
	const op = run.operatingPoint;
	if (!model.reference || op?.detuning === undefined || op.damping === undefined || op.drive === undefined || op.drive === 0) return 1;
	return (
		operatingPointScale({ detuning: op.detuning, damping: op.damping, drive: op.drive }) / operatingPointScale(model.reference, 'reference')
	);
}

export function compileRates(run: ParsedRunInfo): CompiledRates {
	const compile = (process: RateProcess): CompiledModel | null => {
		const model = run.rateModels?.[process];
		if (!model) return null;
		const scale = process === 'escape' ? scaleFor(run, model) : 1;
		const nominal_mK = run.nominal_mK ?? model.nominal_mK;
		// Validates the model (throws a RangeError naming the bad field) and fixes the nominal rate.
		const nominalRate_per_s =
			scale === 1
				? predictRate(model, { T_mK: nominal_mK }).rate_per_s
				: model.W0_per_s * Math.exp((-model.A * scale) / noiseFactor(model.mode_GHz, nominal_mK));
		return { W0_per_s: model.W0_per_s, A_scaled: model.A * scale, mode_GHz: model.mode_GHz, nominal_mK, nominalRate_per_s };
	};
	return { nominal_mK: run.nominal_mK ?? null, switching: compile('switching'), escape: compile('escape') };
}

/** A temperature reading the prediction can use: finite and not negative; anything else is absent. */
export function measuredTemperature(frame: Pick<Frame, 'aux'>): number | null {
	const T = frame.aux?.[TEMPERATURE_AUX];
	return typeof T === 'number' && Number.isFinite(T) && T >= 0 ? T : null;
}

const rateAt = (m: CompiledModel, T_mK: number) => m.W0_per_s * Math.exp(-m.A_scaled / noiseFactor(m.mode_GHz, T_mK));

/**
 * Expected counts of a window. Zero exposure gives an expected count of exactly 0 (never NaN);
 * detectors treat such a window as carrying no rate information.
 */
export function expectFrame(frame: Frame, rates: CompiledRates): FrameExpectation {
	const measured = measuredTemperature(frame);
	const anyModel = rates.switching ?? rates.escape;
	const one = (m: CompiledModel | null, count: number, exposure_s: number): ProcessExpectation | null => {
		if (!m) return null;
		if (!(exposure_s > 0)) return { count, exposure_s: 0, expected: 0, expectedNominal: 0 };
		const rate = measured === null ? m.nominalRate_per_s : rateAt(m, measured);
		return { count, exposure_s, expected: rate * exposure_s, expectedNominal: m.nominalRate_per_s * exposure_s };
	};
	return {
		T_mK: measured ?? anyModel?.nominal_mK ?? rates.nominal_mK ?? 0,
		measured: measured !== null,
		switching: one(rates.switching, frame.switches, frame.dwell_s),
		escape: one(rates.escape, frame.escapes, frame.vacuum_s)
	};
}
