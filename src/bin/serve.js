// Production server: adapter-node's handler plus the agent WebSocket on the same port.
// Honours PORT and HOST like adapter-node's own server (ORIGIN is read by the handler).
import http from 'node:http';
import v8 from 'node:v8';
import { DEFAULT_BODY_LIMIT, DEFAULT_UPLOAD_LIMIT, bodyLimitFor, parseByteLimit, tooLargeMessage } from '../lib/server/http/body-size.js';
import { securityHeaders } from '../lib/server/http/security-headers.js';
import { SERVER_NODE_FLAGS } from './server-flags.js';

// How far V8 lets the old generation grow past what survived its last full collection before the
// next one. Left to itself V8 allows up to 4× on a quiet server, so a week-long export (which moves a
// few hundred kB of short-lived pages to the old generation at each young collection) grew the
// server by 40–60 MB before a full collection ran; at 25 % it stayed 13–41 MB over idle
// (tests/bench/export-memory, --trace-gc) and live commits keep their cost (tests/bench/live-commit).
// V8 reads the setting each time it sizes the heap, so setting it here, before the app loads, is enough.
const heapGrowthPercent = Number(process.env.PHASEWARDEN_V8_HEAP_GROWTH_PERCENT ?? 25);
if (heapGrowthPercent > 0) v8.setFlagsFromString(`--heap-growing-percent=${Math.round(heapGrowthPercent)}`);
// Started some other way than `npm start` (say by a service unit): say what the missing flags cost.
const missingFlags = SERVER_NODE_FLAGS.filter((flag) => !process.execArgv.includes(flag));
if (missingFlags.length)
	console.warn(`started without ${missingFlags.join(' ')}: the server keeps about 60 MB more in memory (npm start passes it)`);

// Two limits: BODY_SIZE_LIMIT for every route, PHASEWARDEN_UPLOAD_LIMIT for frame-file imports.
// adapter-node reads one number (when the handler loads), so it gets the larger; this server and the
// hooks hold every other route to its own, smaller limit.
process.env.BODY_SIZE_LIMIT ||= DEFAULT_BODY_LIMIT;
process.env.PHASEWARDEN_UPLOAD_LIMIT ||= DEFAULT_UPLOAD_LIMIT;
process.env.PHASEWARDEN_ROUTE_BODY_LIMIT = process.env.BODY_SIZE_LIMIT;
const routeLimits = { ...process.env };
process.env.BODY_SIZE_LIMIT = String(
	Math.max(parseByteLimit(process.env.BODY_SIZE_LIMIT), parseByteLimit(process.env.PHASEWARDEN_UPLOAD_LIMIT))
);
/** Past this much of an oversized body the connection is cut instead of read to the end. */
const DRAIN_CAP_BYTES = 64 * 1024 * 1024;
// Loaded by URL so the type checker does not wander into the generated bundle.
const { handler } = await import(new URL('../../build/handler.js', import.meta.url).href);

const UPGRADE_KEY = Symbol.for('phasewarden.upgrade');
const shared = /** @type {Record<symbol, any>} */ (globalThis);
const port = Number(process.env.PORT ?? 3000);
const host = process.env.HOST ?? '0.0.0.0';

// Static files are served by the handler outside SvelteKit's hooks, so the baseline headers go on here;
// SvelteKit's own responses set them again (and their Content-Security-Policy) on top.
const baseline = Object.entries(
	securityHeaders({ hsts: process.env.PHASEWARDEN_HSTS === '1' || (process.env.ORIGIN ?? '').startsWith('https:') })
);
const server = http.createServer((req, res) => {
	for (const [name, value] of baseline) res.setHeader(name, value);
	const declared_bytes = Number(req.headers['content-length'] ?? 0);
	const limit_bytes = bodyLimitFor(req.url ?? '/', routeLimits);
	if (declared_bytes > limit_bytes) return refuseOversized(req, res, declared_bytes, limit_bytes);
	handler(req, res);
});

/**
 * A declared length over the limit: the rest of the body is read and dropped before the 413, because
 * a client still sending (fetch, most HTTP libraries) sees a broken pipe, not the answer, if we hang up first.
 * @param {http.IncomingMessage} req @param {http.ServerResponse} res @param {number} declared_bytes @param {number} limit_bytes
 */
function refuseOversized(req, res, declared_bytes, limit_bytes) {
	let drained_bytes = 0;
	req.on('data', (chunk) => {
		drained_bytes += chunk.length;
		if (drained_bytes > DRAIN_CAP_BYTES) req.destroy();
	});
	req.on('end', () => {
		res.writeHead(413, { 'content-type': 'application/json' });
		res.end(JSON.stringify({ message: tooLargeMessage(`${declared_bytes} bytes`, limit_bytes) }));
	});
}
server.on('upgrade', (req, socket, head) => {
	const upgrade = shared[UPGRADE_KEY];
	if (typeof upgrade !== 'function') return socket.destroy();
	upgrade(req, socket, head);
});

server.listen(port, host, () => {
	console.log(`Phasewarden listening on http://${host === '0.0.0.0' ? 'localhost' : host}:${port}`);
});

let stopping = false;
/** @param {string} signal */
async function stop(signal) {
	if (stopping) return;
	stopping = true;
	console.log(`${signal}: closing`);
	server.close();
	server.closeAllConnections?.();
	const runtime = await shared[Symbol.for('phasewarden.runtime')];
	await runtime?.close();
	process.exit(0);
}
process.on('SIGINT', () => void stop('SIGINT'));
process.on('SIGTERM', () => void stop('SIGTERM'));
