// The request-body limit, shared by the production server (src/bin/serve.js, plain JavaScript) and
// the hooks. It reads BODY_SIZE_LIMIT the way adapter-node does, so both stop at the same number.

export const DEFAULT_BODY_LIMIT = '1M';

/** Frame files imported on a setup's page run to hundreds of megabytes; only that route takes them. */
export const DEFAULT_UPLOAD_LIMIT = '512M';
const UPLOAD_ROUTE = /^\/api\/setups\/[^/]+\/import\/?(\?.*)?$/;

/**
 * The limit for a request path (serve.js keeps the general limit in PHASEWARDEN_ROUTE_BODY_LIMIT,
 * since it raises BODY_SIZE_LIMIT itself for adapter-node): PHASEWARDEN_UPLOAD_LIMIT on the import route, BODY_SIZE_LIMIT elsewhere.
 * @param {string} path @param {NodeJS.ProcessEnv} env
 */
export function bodyLimitFor(path, env = process.env) {
	return isUploadRoute(path)
		? parseByteLimit(env.PHASEWARDEN_UPLOAD_LIMIT || DEFAULT_UPLOAD_LIMIT)
		: parseByteLimit(env.PHASEWARDEN_ROUTE_BODY_LIMIT || env.BODY_SIZE_LIMIT || DEFAULT_BODY_LIMIT);
}

/**
 * The import route: its upload is counted against the limit as it is spooled to disk
 * (transfer/upload-spool.ts), so it is never read ahead into memory to be measured.
 * @param {string} path
 */
export function isUploadRoute(path) {
	return UPLOAD_ROUTE.test(path);
}

/** Bytes in a size like '512K', '1M', '1G' or a plain byte count. @param {string} value */
export function parseByteLimit(value) {
	/** @type {Record<string, number>} */
	const multiplier = { K: 1024, M: 1024 ** 2, G: 1024 ** 3 };
	const unit = value.at(-1)?.toUpperCase() ?? '';
	const bytes = unit in multiplier ? Number(value.slice(0, -1)) * multiplier[unit] : Number(value);
	if (!(bytes > 0)) throw new Error(`BODY_SIZE_LIMIT must be a positive size like 512K or 2M, got "${value}"`);
	return bytes;
}

/** @param {string} detail @param {number} limit_bytes */
export function tooLargeMessage(detail, limit_bytes) {
	return `request body too large: ${detail}; the limit is ${limit_bytes} bytes (BODY_SIZE_LIMIT)`;
}
