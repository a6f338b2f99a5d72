// A response body that asks its source for the next piece only when the reader wants more (pull),
// so a slow client holds the database reads back instead of the server buffering the whole export.
const encoder = new TextEncoder();

export function pullStream(source: AsyncIterable<string>): ReadableStream<Uint8Array> {
	const iterator = source[Symbol.asyncIterator]();
	return new ReadableStream<Uint8Array>(
		{
			async pull(controller) {
				// Skip empty pieces so every pull enqueues something or closes.
				for (;;) {
					const { value, done } = await iterator.next();
					if (done) return controller.close();
					if (value.length) return controller.enqueue(encoder.encode(value));
				}
			},
			async cancel() {
				await iterator.return?.();
			}
		},
		// One piece (a page of rows) queued ahead at most.
		{ highWaterMark: 1 }
	);
}
