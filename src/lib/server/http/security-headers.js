// Headers every response carries. Plain JavaScript so the production server (src/bin/serve.js) can
// put them on the static files it serves outside SvelteKit as well; pages get their
// Content-Security-Policy from kit.csp in svelte.config.js (it needs per-page script hashes).

/** @param {{ hsts: boolean }} options */
export function securityHeaders({ hsts }) {
	/** @type {Record<string, string>} */
	const headers = {
		'x-content-type-options': 'nosniff',
		'referrer-policy': 'same-origin',
		'x-frame-options': 'DENY',
		'permissions-policy': 'camera=(), microphone=(), geolocation=(), payment=(), usb=(), interest-cohort=()'
	};
	// Only behind https: over plain http a browser ignores it, and it would pin a lab's test host to https.
	if (hsts) headers['strict-transport-security'] = 'max-age=31536000; includeSubDomains';
	return headers;
}

/** For responses SvelteKit gives no policy (JSON, files): nothing may load from them or frame them. */
export const NON_PAGE_CSP = "default-src 'none'; frame-ancestors 'none'; base-uri 'none'";
