// Import of an NDJSON frame file into a run of the setup. Answers JSON when done; with ?progress=1
// it answers a stream of NDJSON progress lines instead (for the setup page's progress bar), ending
// in {"outcome": …} or {"refused": {status, message, lines}}.
import { error } from '@sveltejs/kit';
import { describeZodError } from '$lib/protocol/messages';
import { json, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { ImportRefused, importFrameFile, runKeySchema, type ImportPhase } from '$lib/server/transfer/import-frames';
import type { RequestHandler } from './$types';

async function readForm(request: Request) {
	let form: FormData;
	try {
		form = await request.formData();
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
	return { file, runKey, fileName: file instanceof File ? file.name : 'upload' };
}

const refusal = (err: ImportRefused) => ({ status: err.status, message: err.message, lines: err.lines });

export const POST: RequestHandler = async (event) => {
	requireRole(event, 'operator');
	const { file, runKey, fileName } = await readForm(event.request);
	const runtime = await getRuntime();
	const setupId = event.params.id;
	if (!event.url.searchParams.has('progress')) {
		try {
			return json(await importFrameFile(runtime, setupId, file, { runKey, fileName }));
		} catch (err) {
			if (err instanceof ImportRefused) return json({ message: err.message, lines: err.lines }, { status: err.status });
			throw err;
		}
	}
	const encoder = new TextEncoder();
	const body = new ReadableStream<Uint8Array>({
		async start(controller) {
			const send = (line: object) => controller.enqueue(encoder.encode(JSON.stringify(line) + '\n'));
			try {
				const outcome = await importFrameFile(runtime, setupId, file, { runKey, fileName, onPhase: (p: ImportPhase) => send(p) });
				send({ outcome });
			} catch (err) {
				if (err instanceof ImportRefused) send({ refused: refusal(err) });
				else {
					console.error('import failed', err);
					send({ refused: { status: 500, message: 'the import failed on the server; see its log', lines: [] } });
				}
			}
			controller.close();
		}
	});
	return new Response(body, { headers: { 'content-type': 'application/x-ndjson; charset=utf-8', 'cache-control': 'no-store' } });
};
