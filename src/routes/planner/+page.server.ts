// Rate planner: the setups and the chosen setup's saved models for everyone; saving a simulated
// model and fitting or saving a calibration table for operators (the API refuses others too).
import { fail, type RequestEvent } from '@sveltejs/kit';
import { z } from 'zod';
import { hasRole } from '$lib/roles';
import { rateModelSchema } from '$lib/physics/rate-model-schema';
import { describeZodError } from '$lib/protocol/messages';
import { requireRole } from '$lib/server/http/guard';
import { RateModelRefused, saveAndApplyRateModel } from '$lib/server/models/apply';
import { currentRateModel } from '$lib/server/models/rate-models';
import { getRuntime } from '$lib/server/runtime';
import { getSetup, listSetups } from '$lib/server/setups/service';
import { fitCalibrationTable, MAX_TABLE_BYTES } from './calibration';
import type { SavedModel } from './types';
import type { Actions, PageServerLoad } from './$types';

/** A stored model in the page's shape, its time as ISO text as the rate-model API gives it. */
function asSaved(model: Awaited<ReturnType<typeof currentRateModel>>): SavedModel | null {
	return model ? ({ ...model, savedAt: model.savedAt.toISOString() } as SavedModel) : null;
}

/** A trimmed text field from a form, or undefined when empty. */
function field(form: FormData, name: string): string | undefined {
	const v = form.get(name);
	return typeof v === 'string' && v.trim() !== '' ? v.trim() : undefined;
}

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'observer');
	const { db } = await getRuntime();
	const setups = await listSetups(db);
	const wanted = event.url.searchParams.get('setup');
	const setup = wanted ? (setups.find((s) => s.id === wanted) ?? null) : null;
	const [switching, escape] = setup
		? await Promise.all([currentRateModel(db, setup.id, 'switching'), currentRateModel(db, setup.id, 'escape')])
		: [null, null];
	return {
		setups: setups.map(({ id, name, order, states, modeGHz, nominalMK }) => ({ id, name, order, states, modeGHz, nominalMK })),
		setupId: setup?.id ?? null,
		unknownSetup: wanted !== null && setup === null,
		models: setup ? { switching: asSaved(switching), escape: asSaved(escape) } : null
	};
};

type Intent = 'saveModel' | 'fitCalibration' | 'saveCalibration';

function refuse(event: RequestEvent, intent: Intent) {
	if (!hasRole(event.locals.user?.role, 'operator')) {
		return fail(403, { intent, message: 'Only operators can save rate models or fit calibration tables.' });
	}
	return null;
}

/** Saves the model through the same service as the rate-model API; a refusal comes back as words. */
async function putModel(event: RequestEvent, setupId: string, model: unknown, note: string | undefined) {
	const { db, ingest } = await getRuntime();
	try {
		const saved = await saveAndApplyRateModel(db, ingest, setupId, model, event.locals.user!.id, note);
		const shown = asSaved(saved);
		if (!shown) return { ok: false as const, status: 500, message: 'The model was saved but could not be read back.' };
		return { ok: true as const, saved: shown };
	} catch (err) {
		if (err instanceof RateModelRefused) return { ok: false as const, status: err.status, message: err.message };
		throw err;
	}
}

async function findSetup(setupId: string | undefined) {
	if (!setupId) return null;
	const { db } = await getRuntime();
	return getSetup(db, setupId);
}

const processSchema = z.enum(['switching', 'escape']);

function referenceFrom(form: FormData) {
	const op = {
		detuning: Number(form.get('ref_detuning')),
		damping: Number(form.get('ref_damping')),
		drive: Number(form.get('ref_drive'))
	};
	return Number.isFinite(op.detuning) && op.damping > 0 && Number.isFinite(op.drive) && op.drive !== 0 ? op : undefined;
}

/** The calibration part of a form: the table's text, process, target setup and reference. */
async function readCalibration(event: RequestEvent, form: FormData, intent: Intent) {
	const process = processSchema.safeParse(form.get('process'));
	if (!process.success) return { failure: fail(400, { intent, field: 'process', message: 'Choose switching or escape.' }) };
	const setup = await findSetup(field(form, 'setupId'));
	if (!setup) return { failure: fail(400, { intent, field: 'setupId', message: 'Choose the setup this calibration belongs to.' }) };
	let text: string;
	let fileName: string;
	const upload = form.get('table');
	if (upload instanceof File && upload.size > 0) {
		if (upload.size > MAX_TABLE_BYTES) {
			return { failure: fail(400, { intent, field: 'table', message: `The file is larger than ${MAX_TABLE_BYTES / 1024} KiB.` }) };
		}
		text = await upload.text();
		fileName = upload.name;
	} else {
		text = String(form.get('csv') ?? '');
		fileName = field(form, 'fileName') ?? 'table.csv';
	}
	if (text.trim() === '') return { failure: fail(400, { intent, field: 'table', message: 'Choose a CSV file to upload.' }) };
	const outcome = fitCalibrationTable(text, {
		process: process.data,
		mode_GHz: setup.modeGHz,
		nominal_mK: setup.nominalMK,
		reference: referenceFrom(form)
	});
	return { setup, text, fileName, process: process.data, outcome };
}

export const actions: Actions = {
	saveModel: async (event) => {
		const denied = refuse(event, 'saveModel');
		if (denied) return denied;
		const form = await event.request.formData();
		const setupId = field(form, 'setupId');
		if (!setupId) return fail(400, { intent: 'saveModel', field: 'setupId', message: 'Choose the setup to save the model for.' });
		let raw: unknown;
		try {
			raw = JSON.parse(String(form.get('model') ?? ''));
		} catch {
			return fail(400, { intent: 'saveModel', message: 'Run a simulation first: there is no model to save.' });
		}
		const parsed = rateModelSchema.safeParse(raw);
		if (!parsed.success) return fail(400, { intent: 'saveModel', message: `The model is not valid: ${describeZodError(parsed.error)}` });
		const note = field(form, 'note');
		const put = await putModel(event, setupId, { ...parsed.data, source: 'planner' }, note);
		if (!put.ok) return fail(put.status, { intent: 'saveModel', message: put.message });
		const setup = await findSetup(setupId);
		return { intent: 'saveModel' as const, saved: put.saved, setupId, setupName: setup?.name ?? setupId };
	},

	fitCalibration: async (event) => {
		const denied = refuse(event, 'fitCalibration');
		if (denied) return denied;
		const form = await event.request.formData();
		const read = await readCalibration(event, form, 'fitCalibration');
		if ('failure' in read) return read.failure;
		const { outcome, setup } = read;
		if (!outcome.ok) {
			return fail(400, {
				intent: 'fitCalibration',
				fileName: read.fileName,
				csvErrors: outcome.errors,
				message: 'The table was refused; nothing was stored.'
			});
		}
		return {
			intent: 'fitCalibration' as const,
			calibration: {
				csv: read.text,
				fileName: read.fileName,
				process: read.process,
				setupId: setup.id,
				setupName: setup.name,
				points: outcome.points,
				hasOperatingPoints: outcome.hasOperatingPoints,
				model: outcome.fit.model,
				method: outcome.fit.method,
				goodnessOfFit: outcome.fit.goodnessOfFit
			}
		};
	},

	saveCalibration: async (event) => {
		const denied = refuse(event, 'saveCalibration');
		if (denied) return denied;
		const form = await event.request.formData();
		const read = await readCalibration(event, form, 'saveCalibration');
		if ('failure' in read) return read.failure;
		// The same fit as shown: the table is re-read and re-fitted here, never taken from the page.
		if (!read.outcome.ok) {
			return fail(400, {
				intent: 'saveCalibration',
				csvErrors: read.outcome.errors,
				message: 'The table was refused; nothing was stored.'
			});
		}
		const put = await putModel(event, read.setup.id, read.outcome.fit.model, field(form, 'note'));
		if (!put.ok) return fail(put.status, { intent: 'saveCalibration', message: put.message });
		return { intent: 'saveCalibration' as const, saved: put.saved, setupId: read.setup.id, setupName: read.setup.name };
	}
};
