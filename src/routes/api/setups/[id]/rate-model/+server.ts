import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { rateModelSchema } from '$lib/physics/rate-model-schema';
import { json, readJson, requireRole } from '$lib/server/http/guard';
import { modelNoteSchema, RateModelRefused, saveAndApplyRateModel } from '$lib/server/models/apply';
import { currentRateModel, rateModelHistory } from '$lib/server/models/rate-models';
import { getRuntime } from '$lib/server/runtime';
import { getSetup } from '$lib/server/setups/service';
import type { RequestHandler } from './$types';

/** The switching model (what the detectors compare against), the escape model, and the history. */
export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const { db } = await getRuntime();
	if (!(await getSetup(db, event.params.id))) error(404, 'no setup with this id');
	const [rateModel, escapeModel, history] = await Promise.all([
		currentRateModel(db, event.params.id, 'switching'),
		currentRateModel(db, event.params.id, 'escape'),
		rateModelHistory(db, event.params.id)
	]);
	return json({ rateModel, escapeModel, history });
};

const body = rateModelSchema.and(z.object({ note: modelNoteSchema }));

/** Saves a model for its process; it applies to frames committed from now on. */
export const PUT: RequestHandler = async (event) => {
	const user = requireRole(event, 'operator');
	const { note, ...model } = await readJson(event.request, body);
	const { db, ingest } = await getRuntime();
	try {
		return json({ rateModel: await saveAndApplyRateModel(db, ingest, event.params.id, model, user.id, note) });
	} catch (err) {
		if (err instanceof RateModelRefused) error(err.status, err.message);
		throw err;
	}
};
