// Oversized request bodies get 413 with a message on every route. adapter-node already stops reading
// past BODY_SIZE_LIMIT, but better-auth turns the resulting stream error into a 500, and the dev
// server has no limit at all; so a declared length over the limit is refused before any route runs,
// and a body of undeclared length (chunked) is read here first so it fails the same way.
import { json, type Handle } from '@sveltejs/kit';

// The production server (src/bin/serve.js) sets the same default before adapter-node reads it.
export const DEFAULT_BODY_LIMIT = '1M';

/** The byte count of a BODY_SIZE_LIMIT value as adapter-node reads it ('512K', '1M', '1G', bytes). */
export function parseByteLimit(value: string): number {
	const multiplier: Record<string, number> = { K: 1024, M: 1024 ** 2, G: 1024 ** 3 };
	const unit = value.at(-1)?.toUpperCase() ?? '';
	const bytes = unit in multiplier ? Number(value.slice(0, -1)) * multiplier[unit] : Number(value);
	if (!(bytes > 0)) throw new Error(`BODY_SIZE_LIMIT must be a positive size like 512K or 2M, got "${value}"`);
	return bytes;
}

// In development the limit is ours alone: only the production server's adapter enforces it while reading.
const limit_bytes = parseByteLimit(process.env.BODY_SIZE_LIMIT || DEFAULT_BODY_LIMIT);

function tooLarge(detail: string) {
	return json({ message: `request body too large: ${detail}; the limit is ${limit_bytes} bytes (BODY_SIZE_LIMIT)` }, { status: 413 });
}

export const refuseOversizedBodies: Handle = async ({ event, resolve }) => {
	const declared = Number(event.request.headers.get('content-length') ?? 0);
	if (declared > limit_bytes) return tooLarge(`${declared} bytes`);
	if (event.request.body && !event.request.headers.has('content-length') && (await runsPastLimit(event.request))) {
		return tooLarge('the body ran past it');
	}
	return resolve(event);
};

/** Reads a copy of the body, stopping as soon as it passes the limit (adapter-node's own stop counts too). */
async function runsPastLimit(request: Request): Promise<boolean> {
	const reader = request.clone().body!.getReader();
	let size_bytes = 0;
	try {
		for (;;) {
			const { done, value } = await reader.read();
			if (done) return false;
			size_bytes += value.byteLength;
			if (size_bytes > limit_bytes) {
				await reader.cancel();
				return true;
			}
		}
	} catch (err) {
		if ((err as { status?: number }).status === 413) return true;
		throw err;
	}
}
