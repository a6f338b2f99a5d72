// What the detector engine must know about a run besides its frames: the setup's nominal
// temperature, its current rate models and the run's operating point.
import type { RunInfo } from '../../detect/run-info';
import type { Db } from '../db';
import { currentRateModel } from '../models/rate-models';
import { getSetup } from '../setups/service';
import type { RunRow } from './service';

type RunFacts = Pick<RunInfo, 'nominal_mK' | 'rateModels' | 'operatingPoint'>;

function stripMeta<T extends object | null>(model: T) {
	if (!model) return undefined;
	const { savedAt: _a, savedBy: _b, ...rest } = model as T & { savedAt?: unknown; savedBy?: unknown };
	return rest;
}

/** Numbers among the agent's operating point that the detectors understand. */
function operatingPointOf(run: RunRow): RunInfo['operatingPoint'] {
	const op = run.operatingPoint ?? {};
	const pick = (k: string) => (typeof op[k] === 'number' && Number.isFinite(op[k]) ? (op[k] as number) : undefined);
	const result = { detuning: pick('detuning'), damping: pick('damping'), drive: pick('drive') };
	return Object.values(result).some((v) => v !== undefined) ? result : undefined;
}

export async function runFacts(db: Db, run: RunRow): Promise<RunFacts> {
	const [setup, switching, escape] = await Promise.all([
		getSetup(db, run.setupId),
		currentRateModel(db, run.setupId, 'switching'),
		currentRateModel(db, run.setupId, 'escape')
	]);
	const damping = operatingPointOf(run)?.damping;
	return {
		nominal_mK: setup?.nominalMK,
		rateModels: { switching: stripMeta(switching), escape: stripMeta(escape) } as RunInfo['rateModels'],
		operatingPoint: damping !== undefined && damping <= 0 ? undefined : operatingPointOf(run)
	};
}

export async function runInfoFor(db: Db, run: RunRow): Promise<RunInfo> {
	return {
		runId: run.id,
		states: run.states,
		order: run.order,
		mode_GHz: run.modeGHz,
		openedAt_ms: run.startedAt.getTime(),
		...(await runFacts(db, run))
	};
}
