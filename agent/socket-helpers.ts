// Small promises around a WebSocket and its options: wait for a close (or end it), give up after a
// time, drop options left undefined so defaults apply.
import WebSocket from 'ws';

export function closeOf(ws: WebSocket, timeoutMs: number): Promise<number | null> {
	if (ws.readyState === WebSocket.CLOSED) return Promise.resolve(null);
	return new Promise((resolve) => {
		const timer = setTimeout(() => {
			ws.terminate();
			resolve(null);
		}, timeoutMs);
		ws.once('close', (code: number) => {
			clearTimeout(timer);
			resolve(code);
		});
	});
}

export function withTimeout<T>(promise: Promise<T>, ms: number): Promise<T> {
	return new Promise((resolve, reject) => {
		const timer = setTimeout(() => reject(new Error('timeout')), ms);
		promise.then(
			(v) => {
				clearTimeout(timer);
				resolve(v);
			},
			(e) => {
				clearTimeout(timer);
				reject(e);
			}
		);
	});
}

export function stripUndefined<T extends object>(o: T): Partial<T> {
	return Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined)) as Partial<T>;
}
