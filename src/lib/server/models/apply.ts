// Saving a rate model for a setup and applying it to the setup's live runs: shared by
// PUT /api/setups/:id/rate-model and the pages that save models (planner, calibration).
import { z } from 'zod';
import { rateModelSchema } from '../../physics/rate-model-schema';
import { safeText } from '../../protocol/safe-text';
import { describeZodError } from '../../protocol/messages';
import type { Db } from '../db';
import { getSetup } from '../setups/service';
import { currentRateModel, saveRateModel } from './rate-models';

/** The note saved with a model, as PUT /api/setups/:id/rate-model takes it. */
export const modelNoteSchema = safeText(z.string().trim().max(500, 'note is at most 500 characters')).optional();

export class RateModelRefused extends Error {
	constructor(
		readonly status: 400 | 404,
		message: string
	) {
		super(message);
	}
}

/**
 * Checks the model against the stored schema, saves it and tells the ingest its runs' facts
 * changed; answers the model now in force for its process. Throws RateModelRefused.
 */
export async function saveAndApplyRateModel(
	db: Db,
	ingest: { runFactsChanged(setupId: string): Promise<unknown> },
	setupId: string,
	model: unknown,
	actorId: string,
	note?: string
) {
	const parsed = rateModelSchema.safeParse(model);
	if (!parsed.success) throw new RateModelRefused(400, describeZodError(parsed.error));
	const checkedNote = modelNoteSchema.safeParse(note);
	if (!checkedNote.success) throw new RateModelRefused(400, describeZodError(checkedNote.error, 'note'));
	if (!(await getSetup(db, setupId))) throw new RateModelRefused(404, 'no setup with this id');
	await saveRateModel(db, setupId, parsed.data, actorId, checkedNote.data);
	await ingest.runFactsChanged(setupId);
	return currentRateModel(db, setupId, parsed.data.process);
}
