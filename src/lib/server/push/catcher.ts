// A local stand-in for a push service (PHASEWARDEN_CATCHER=1): it plays both the push service and
// the browser, so it holds each device's private key, decrypts what the server sends (RFC 8291,
// aes128gcm, with the http_ece package web-push itself uses) and keeps it for /api/dev/push.
// Unknown or dropped devices answer 410 Gone, as a real push service does for an expired subscription.
import { createECDH, randomBytes, randomUUID, type ECDH } from 'node:crypto';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import { decrypt } from 'http_ece';

export type CaughtPush = {
	id: number;
	deviceId: string;
	endpoint: string;
	receivedAt: Date;
	ttl: string | null;
	urgency: string | null;
	topic: string | null;
	/** The `k=` of the VAPID Authorization header: the sending server's public key. */
	vapidKey: string | null;
	/** The decrypted payload, parsed when it is JSON. */
	payload: unknown;
};

export type CatcherDevice = { endpoint: string; keys: { p256dh: string; auth: string } };

export type PushCatcher = {
	port: number;
	/** A new device: a subscription whose messages this catcher can read. */
	createDevice(): CatcherDevice;
	/** From now on the device answers 410, like an expired subscription. */
	dropDevice(endpoint: string): void;
	messages(): CaughtPush[];
	close(): Promise<void>;
};

const MAX_BODY_BYTES = 8 * 1024;

export async function startPushCatcher(): Promise<PushCatcher> {
	const devices = new Map<string, { ecdh: ECDH; auth: string }>();
	const caught: CaughtPush[] = [];
	let nextId = 1;
	let base = '';

	const server = http.createServer((req, res) => {
		const match = /^\/push\/([\w-]+)$/.exec(req.url ?? '');
		if (req.method !== 'POST' || !match) return void res.writeHead(404).end('not a push endpoint');
		const chunks: Buffer[] = [];
		let size = 0;
		req.on('data', (c: Buffer) => {
			size += c.length;
			if (size <= MAX_BODY_BYTES) chunks.push(c);
		});
		req.on('end', () => {
			const device = devices.get(match[1]);
			if (!device) return void res.writeHead(410).end('push subscription has expired or is unknown');
			if (size > MAX_BODY_BYTES) return void res.writeHead(413).end('payload too large');
			if (req.headers['content-encoding'] !== 'aes128gcm') return void res.writeHead(400).end('expected Content-Encoding: aes128gcm');
			let payload: unknown;
			try {
				const text = decrypt(Buffer.concat(chunks), { version: 'aes128gcm', privateKey: device.ecdh, authSecret: device.auth }).toString(
					'utf8'
				);
				try {
					payload = JSON.parse(text);
				} catch {
					payload = text;
				}
			} catch (err) {
				return void res.writeHead(400).end(`could not decrypt: ${(err as Error).message}`);
			}
			const auth = String(req.headers.authorization ?? '');
			caught.push({
				id: nextId++,
				deviceId: match[1],
				endpoint: `${base}/push/${match[1]}`,
				receivedAt: new Date(),
				ttl: header(req, 'ttl'),
				urgency: header(req, 'urgency'),
				topic: header(req, 'topic'),
				vapidKey: /(?:^|[ ,])k=([\w-]+)/.exec(auth)?.[1] ?? null,
				payload
			});
			res.writeHead(201).end();
		});
	});
	await new Promise<void>((resolve, reject) => {
		server.once('error', reject);
		server.listen(0, '127.0.0.1', () => resolve());
	});
	const port = (server.address() as AddressInfo).port;
	base = `http://127.0.0.1:${port}`;

	return {
		port,
		createDevice() {
			const id = randomUUID();
			const ecdh = createECDH('prime256v1');
			ecdh.generateKeys();
			const auth = randomBytes(16).toString('base64url');
			devices.set(id, { ecdh, auth });
			return { endpoint: `${base}/push/${id}`, keys: { p256dh: ecdh.getPublicKey('base64url'), auth } };
		},
		dropDevice(endpoint) {
			devices.delete(endpoint.split('/').pop() ?? '');
		},
		messages: () => caught.map((m) => ({ ...m, receivedAt: new Date(m.receivedAt) })),
		close: () => new Promise<void>((resolve) => server.close(() => resolve()))
	};
}

function header(req: http.IncomingMessage, name: string): string | null {
	const v = req.headers[name];
	return v === undefined ? null : String(v);
}
