// Entry point for the agent socket, used by the Vite dev plugin and the production server alike.
import type { IncomingMessage } from 'node:http';
import type { Duplex } from 'node:stream';
import { getRuntime } from '../runtime';
import { AGENT_STREAM_PATH } from './ingest';

export async function handleAgentUpgrade(req: IncomingMessage, socket: Duplex, head: Buffer) {
	const url = new URL(req.url ?? '/', 'http://localhost');
	if (url.pathname !== AGENT_STREAM_PATH) return socket.destroy();
	try {
		const runtime = await getRuntime();
		await runtime.ingest.handleUpgrade(req, socket, head);
	} catch (err) {
		console.error('agent upgrade failed', err);
		socket.write('HTTP/1.1 500 Internal Server Error\r\nConnection: close\r\n\r\n');
		socket.destroy();
	}
}
