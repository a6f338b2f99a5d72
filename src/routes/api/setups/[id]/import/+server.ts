import { error } from '@sveltejs/kit';
import { describeZodError } from '$lib/protocol/messages';
import { json, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { ImportRefused, importFrameFile, runKeySchema } from '$lib/server/transfer/import-frames';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	requireRole(event, 'operator');
	let form: FormData;
	try {
		form = await event.request.formData();
	} catch {
		error(400, 'send the file as multipart/form-data with a field "file"');
	}
	const file = form.get('file');
	if (!(file instanceof Blob)) error(400, 'field "file" is missing: choose an NDJSON file of frames');
	const rawKey = form.get('runKey');
	let runKey: string | undefined;
	if (typeof rawKey === 'string' && rawKey.trim() !== '') {
		const parsed = runKeySchema.safeParse(rawKey);
		if (!parsed.success) error(400, describeZodError(parsed.error, 'runKey'));
		runKey = parsed.data;
	}
	const runtime = await getRuntime();
	try {
		const outcome = await importFrameFile(runtime, event.params.id, file, { runKey, fileName: file instanceof File ? file.name : 'upload' });
		return json(outcome);
	} catch (err) {
		if (err instanceof ImportRefused) return json({ message: err.message, lines: err.lines }, { status: err.status });
		throw err;
	}
};
