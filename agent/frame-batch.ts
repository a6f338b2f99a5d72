// Packs frames into one "frames" message of the wire protocol: at most MAX_FRAMES_PER_MESSAGE
// frames, at most `room` of them, and no more bytes than maxBytes (a single frame always goes).
import { MAX_FRAMES_PER_MESSAGE, type Frame } from '../src/lib/protocol/index.ts';

const ENVELOPE_HEAD = '{"type":"frames","frames":[';
const ENVELOPE_TAIL = ']}';

/** The message text for the first frames of `frames`, and how many of them it holds. */
export function packFrames(frames: readonly Frame[], room: number, maxBytes: number): { message: string; count: number } {
	const parts: string[] = [];
	let bytes = ENVELOPE_HEAD.length + ENVELOPE_TAIL.length;
	while (parts.length < MAX_FRAMES_PER_MESSAGE && parts.length < room && parts.length < frames.length) {
		const json = JSON.stringify(frames[parts.length]);
		const size = Buffer.byteLength(json) + 1;
		if (parts.length > 0 && bytes + size > maxBytes) break;
		parts.push(json);
		bytes += size;
	}
	return { message: ENVELOPE_HEAD + parts.join(',') + ENVELOPE_TAIL, count: parts.length };
}
