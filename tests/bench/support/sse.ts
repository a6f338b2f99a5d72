// A server-sent events reader over fetch: calls back with each event's name, parsed data and the
// performance.now() at which it arrived. Hand-written because the format is a few lines and the
// benchmark needs the arrival time of each event, with the session cookie on the request.
import { performance } from 'node:perf_hooks';

export interface SseConnection {
	close(): void;
	/** Resolves once the stream's first bytes (the server's ": connected" comment) arrived. */
	ready: Promise<void>;
}

export function openEventStream(
	url: string,
	cookie: string,
	onEvent: (event: string, data: unknown, at_ms: number) => void
): SseConnection {
	const abort = new AbortController();
	let markReady: () => void = () => {};
	let failReady: (err: Error) => void = () => {};
	const ready = new Promise<void>((resolve, reject) => ((markReady = resolve), (failReady = reject)));
	void (async () => {
		const res = await fetch(url, { headers: { cookie, accept: 'text/event-stream' }, signal: abort.signal });
		if (!res.ok || !res.body) throw new Error(`${url}: HTTP ${res.status}`);
		const decoder = new TextDecoder();
		let buffer = '';
		for await (const chunk of res.body) {
			markReady();
			const at = performance.now();
			buffer += decoder.decode(chunk as Uint8Array, { stream: true });
			let end: number;
			while ((end = buffer.indexOf('\n\n')) >= 0) {
				const block = buffer.slice(0, end);
				buffer = buffer.slice(end + 2);
				let name = 'message';
				const data: string[] = [];
				for (const line of block.split('\n')) {
					if (line.startsWith('event: ')) name = line.slice(7);
					else if (line.startsWith('data: ')) data.push(line.slice(6));
				}
				if (data.length) onEvent(name, JSON.parse(data.join('\n')), at);
			}
		}
	})().catch((err) => {
		if (!abort.signal.aborted) failReady(err as Error);
	});
	return { close: () => abort.abort(), ready };
}
