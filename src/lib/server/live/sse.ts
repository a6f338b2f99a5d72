// Server-sent events from the live bus, filtered per subscriber; a comment line every 20 s keeps
// proxies from closing an idle stream.
import type { LiveBus, LiveEvent } from './bus';

export function eventStream(bus: LiveBus, accept: (e: LiveEvent) => boolean, signal: AbortSignal): Response {
	const encoder = new TextEncoder();
	let cleanup = () => {};
	const stream = new ReadableStream<Uint8Array>({
		start(controller) {
			const write = (text: string) => {
				try {
					controller.enqueue(encoder.encode(text));
				} catch {
					cleanup();
				}
			};
			write(': connected\n\n');
			const unsubscribe = bus.subscribe((e) => {
				if (!accept(e)) return;
				const { type, ...rest } = e;
				const data =
					type === 'frames'
						? { frames: e.frames }
						: type === 'run'
							? { run: e.run, ...(e.detectors ? { detectors: e.detectors } : {}) }
							: { incident: e.incident };
				void rest;
				write(`event: ${type}\ndata: ${JSON.stringify(data)}\n\n`);
			});
			const keepAlive = setInterval(() => write(': keep-alive\n\n'), 20_000);
			cleanup = () => {
				unsubscribe();
				clearInterval(keepAlive);
				try {
					controller.close();
				} catch {
					/* already closed */
				}
			};
			signal.addEventListener('abort', () => cleanup());
		},
		cancel() {
			cleanup();
		}
	});
	return new Response(stream, {
		headers: { 'content-type': 'text/event-stream', 'cache-control': 'no-cache', connection: 'keep-alive' }
	});
}
