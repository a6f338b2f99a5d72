// The request-body limit, shared by the production server (src/bin/serve.js, plain JavaScript) and
// the hooks. It reads BODY_SIZE_LIMIT the way adapter-node does, so both stop at the same number.

export const DEFAULT_BODY_LIMIT = '1M';

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
