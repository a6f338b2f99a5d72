// One stored window as the evidence charts need it (a frame without its histograms), and the
// rate model's prediction for it, taken from the model the detector recorded in the evidence.
import { measuredTemperature } from '../detect/expected';
import { noiseFactor } from '../physics/occupation';
import { numAt, objAt } from './read';

export type EvidenceWindow = {
	seq: number;
	t_ms: number;
	window_s: number;
	lock: number;
	switches: number;
	escapes: number;
	dwell_s: number;
	vacuum_s: number;
	aux: Record<string, number> | null;
};

export type Process = 'switching' | 'escape';

export const countOf = (w: EvidenceWindow, p: Process) => (p === 'escape' ? w.escapes : w.switches);
export const exposureOf = (w: EvidenceWindow, p: Process) => (p === 'escape' ? w.vacuum_s : w.dwell_s);

export type Prediction = { atTemperature: number; atNominal: number };

/**
 * W(T)·exposure with W(T) = W0·exp(−A / coth(hf/2k_BT)), the model the detector recorded
 * (physics/occupation.ts). Null when the evidence names no model.
 */
export function predictorFromEvidence(evidence: Record<string, unknown>, process: Process): ((w: EvidenceWindow) => Prediction) | null {
	const model = objAt(evidence, 'rateModel');
	const W0 = numAt(model, 'W0_per_s');
	const A = numAt(model, 'A');
	const mode = numAt(model, 'mode_GHz');
	const nominal = numAt(evidence, 'nominal_mK') ?? numAt(model, 'nominal_mK');
	if (W0 === null || A === null || mode === null || nominal === null) return null;
	const rateAt = (T_mK: number) => W0 * Math.exp(-A / noiseFactor(mode, T_mK));
	const nominalRate = rateAt(nominal);
	return (w) => {
		const exposure = exposureOf(w, process);
		if (!(exposure > 0)) return { atTemperature: 0, atNominal: 0 };
		const T = measuredTemperature({ aux: w.aux ?? undefined });
		return { atTemperature: (T === null ? nominalRate : rateAt(T)) * exposure, atNominal: nominalRate * exposure };
	};
}
