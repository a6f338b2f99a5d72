// Production server: adapter-node's handler plus the agent WebSocket on the same port.
// Honours PORT and HOST like adapter-node's own server (ORIGIN is read by the handler).
import http from 'node:http';
// Frame files imported on a setup's page run to hundreds of megabytes; adapter-node's default
// request limit (512 KB) would refuse them. Set BODY_SIZE_LIMIT to choose another bound.
process.env.BODY_SIZE_LIMIT ??= '512M';
// Loaded by URL so the type checker does not wander into the generated bundle.
const { handler } = await import(new URL('../../build/handler.js', import.meta.url).href);

const UPGRADE_KEY = Symbol.for('phasewarden.upgrade');
const shared = /** @type {Record<symbol, any>} */ (globalThis);
const port = Number(process.env.PORT ?? 3000);
const host = process.env.HOST ?? '0.0.0.0';

const server = http.createServer(handler);
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
