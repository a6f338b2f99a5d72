// Oversized request bodies get 413 with a message on every route. adapter-node already stops reading
// past BODY_SIZE_LIMIT, but better-auth turns the resulting stream error into a 500, and the dev
// server has no limit at all; so a declared length over the limit is refused before any route runs,
// and a body of undeclared length (chunked) is read here first so it fails the same way (except an
// import upload, which the spool counts as it writes it to disk).
import { json, type Handle } from '@sveltejs/kit';
import { bodyLimitFor, isUploadRoute, tooLargeMessage } from './body-size.js';

// The production server (src/bin/serve.js) applies the same limits before adapter-node reads a body.
// In development the limits are ours alone: only the production server's adapter enforces one while reading.
function tooLarge(detail: string, limit_bytes: number) {
	return json({ message: tooLargeMessage(detail, limit_bytes) }, { status: 413 });
}

export const refuseOversizedBodies: Handle = async ({ event, resolve }) => {
	const limit_bytes = bodyLimitFor(event.url.pathname);
	const declared = Number(event.request.headers.get('content-length') ?? 0);
	if (declared > limit_bytes) return tooLarge(`${declared} bytes`, limit_bytes);
	// A chunked import upload is counted while it is spooled to disk instead: reading it ahead here
	// would hold a copy of the whole file in memory.
	const countedLater = isUploadRoute(event.url.pathname);
	if (
		event.request.body &&
		!event.request.headers.has('content-length') &&
		!countedLater &&
		(await runsPastLimit(event.request, limit_bytes))
	) {
		return tooLarge('the body ran past it', limit_bytes);
	}
	return resolve(event);
};

/** Reads a copy of the body, stopping as soon as it passes the limit (adapter-node's own stop counts too). */
async function runsPastLimit(request: Request, limit_bytes: number): Promise<boolean> {
	const reader = request.clone().body!.getReader();
	let size_bytes = 0;
	try {
		for (;;) {
			const { done, value } = await reader.read();
			if (done) return false;
			size_bytes += value.byteLength;
			if (size_bytes > limit_bytes) {
				// Not awaited: cancelling one branch of a tee settles only once the other branch is
				// cancelled too, and the other one is drained below.
				void reader.cancel();
				await drainRest(request);
				return true;
			}
		}
	} catch (err) {
		if ((err as { status?: number }).status === 413) return true;
		throw err;
	}
}

/** Past this much of an oversized body the rest is no longer read (the client then sees the connection end). */
const DRAIN_CAP_BYTES = 64 * 1024 * 1024;

/**
 * Reads and drops the rest of a refused body before the 413 goes out: a client still sending (fetch
 * with a streamed body) reads no answer until its body is through. Only the import route lets
 * adapter-node read large bodies, so this is what holds the other routes to their own limit.
 */
async function drainRest(request: Request) {
	const reader = request.body?.getReader();
	if (!reader) return;
	let drained_bytes = 0;
	try {
		for (;;) {
			const { done, value } = await reader.read();
			if (done) return;
			drained_bytes += value.byteLength;
			if (drained_bytes > DRAIN_CAP_BYTES) return void (await reader.cancel());
		}
	} catch {
		/* the client gave up: nothing left to drain */
	}
}
