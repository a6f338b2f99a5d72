// Shapes the rate planner's page and its server actions share.
import type { ActivationFit, RateModel } from '$lib/physics/activation';
import type { CsvError } from '$lib/physics/calibration-csv';
import type { CalibrationPlotPoint } from './calibration';

/** A rate model as the API returns it: the model plus who saved it and when. */
export type SavedModel = RateModel & { savedAt: string; savedBy: string | null };

export interface CalibrationShown {
	csv: string;
	fileName: string;
	process: 'switching' | 'escape';
	setupId: string;
	setupName: string;
	points: CalibrationPlotPoint[];
	hasOperatingPoints: boolean;
	model: RateModel;
	method: ActivationFit['method'];
	goodnessOfFit: ActivationFit['goodnessOfFit'];
}

/** Every field any action of the page may return, success or failure. */
export interface PlannerActionData {
	intent?: 'saveModel' | 'fitCalibration' | 'saveCalibration';
	message?: string;
	field?: string;
	fileName?: string;
	csvErrors?: CsvError[];
	calibration?: CalibrationShown;
	saved?: SavedModel;
	setupId?: string;
	setupName?: string;
}
