// Splits a byte stream into numbered text lines without holding more than one line (plus one
// chunk) at a time, so an upload of any size is read in bounded memory. A line longer than
// maxChars is reported as too long and skipped to its end rather than buffered.
export interface NumberedLine {
	/** 1-based, as an editor counts. */
	line: number;
	/** The text without its line ending; null when the line exceeded maxChars. */
	text: string | null;
}

export async function* readLines(stream: ReadableStream<Uint8Array>, maxChars: number): AsyncGenerator<NumberedLine> {
	const reader = stream.getReader();
	const decoder = new TextDecoder();
	let pending = '';
	let tooLong = false;
	let line = 0;
	const finish = (text: string): NumberedLine => {
		line++;
		const out = { line, text: tooLong ? null : text.endsWith('\r') ? text.slice(0, -1) : text };
		tooLong = false;
		return out;
	};
	try {
		for (;;) {
			const { value, done } = await reader.read();
			const chunk = done ? decoder.decode() : decoder.decode(value, { stream: true });
			let start = 0;
			for (let nl = chunk.indexOf('\n'); nl >= 0; nl = chunk.indexOf('\n', start)) {
				const text = pending + chunk.slice(start, nl);
				pending = '';
				yield finish(text);
				start = nl + 1;
			}
			if (!tooLong) {
				pending += chunk.slice(start);
				if (pending.length > maxChars) {
					tooLong = true;
					pending = '';
				}
			}
			if (done) break;
		}
		if (pending.length > 0 || tooLong) yield finish(pending);
	} finally {
		reader.releaseLock();
	}
}
