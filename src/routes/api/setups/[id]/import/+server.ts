// Import of an NDJSON frame file into a run of the setup. Answers JSON when done; with ?progress=1
// it answers a stream of NDJSON progress lines instead (for the setup page's progress bar), ending
// in {"outcome": …} or {"refused": {status, message, lines}}. The upload is spooled to the data folder
// as it arrives (upload-spool.ts), never held in memory whole.
import { error } from '@sveltejs/kit';
import { describeZodError } from '$lib/protocol/messages';
import { json, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { ImportRefused, importFrameFile, runKeySchema, type ImportPhase } from '$lib/server/transfer/import-frames';
import { bodyLimitFor } from '$lib/server/http/body-size.js';
import { spoolUpload, UploadRefused, UploadTooLarge, type SpooledUpload } from '$lib/server/transfer/upload-spool';
import type { RequestHandler } from './$types';

async function readUpload(request: Request, pathname: string, dataDir: string) {
	let upload: SpooledUpload;
	try {
		upload = await spoolUpload(request, dataDir, bodyLimitFor(pathname));
	} catch (err) {
		if (err instanceof UploadTooLarge) error(413, err.message);
		if (err instanceof UploadRefused) error(400, err.message);
		throw err;
	}
	const rawKey = upload.fields.runKey;
	let runKey: string | undefined;
	if (typeof rawKey === 'string' && rawKey.trim() !== '') {
		const parsed = runKeySchema.safeParse(rawKey);
		if (!parsed.success) {
			upload.discard();
			error(400, describeZodError(parsed.error, 'runKey'));
		}
		runKey = parsed.data;
	}
	return { upload, runKey };
}

const refusal = (err: ImportRefused) => ({ status: err.status, message: err.message, lines: err.lines });

export const POST: RequestHandler = async (event) => {
	requireRole(event, 'operator');
	const runtime = await getRuntime();
	const { upload, runKey } = await readUpload(event.request, event.url.pathname, runtime.config.dataDir);
	const { file, fileName } = upload;
	const setupId = event.params.id;
	if (!event.url.searchParams.has('progress')) {
		try {
			return json(await importFrameFile(runtime, setupId, file, { runKey, fileName }));
		} catch (err) {
			if (err instanceof ImportRefused) return json({ message: err.message, lines: err.lines }, { status: err.status });
			throw err;
		} finally {
			upload.discard();
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
			} finally {
				upload.discard();
			}
			controller.close();
		}
	});
	return new Response(body, { headers: { 'content-type': 'application/x-ndjson; charset=utf-8', 'cache-control': 'no-store' } });
};
