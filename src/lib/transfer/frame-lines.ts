// Checks an NDJSON file of frames line by line with the wire protocol's own rules (frameSchema,
// then checkFrameAgainstRun), so a file is refused for exactly what a live agent would be refused
// for, plus what only a file can get wrong: a line that is not JSON, and seqs out of order.
import { checkFrameAgainstRun, frameSchema, type Frame } from '../protocol/frame';
import { describeZodError, MAX_MESSAGE_BYTES } from '../protocol/messages';
import { readLines } from './read-lines';

/** A frame line is at most one wire message long. */
export const MAX_LINE_CHARS = MAX_MESSAGE_BYTES;
/** Bad lines listed in a refusal; the count of all of them is given too. */
export const MAX_LISTED_LINES = 1000;

export interface LineProblem {
	line: number;
	message: string;
}

export interface LineRules {
	/** K of the run the frames go into. */
	states: number;
	/** Seqs above this are refused (an open run's agent sends those itself); null: no bound. */
	maxSeq: number | null;
	/** Why seqs above maxSeq are refused, said in the message. */
	maxSeqReason?: string;
}

export type CheckedLine = { line: number; frame: Frame } | { line: number; problem: string } | { line: number; blank: true };

/** Parses and checks one line; `prev` is the last good frame's seq and line (order is checked against it). */
export function checkFrameLine(
	text: string | null,
	line: number,
	rules: LineRules,
	prev: { seq: number; line: number } | null
): CheckedLine {
	if (text === null) return { line, problem: `longer than ${MAX_LINE_CHARS} characters (one frame per line)` };
	if (text.trim() === '') return { line, blank: true };
	let json: unknown;
	try {
		json = JSON.parse(text);
	} catch (err) {
		return { line, problem: `not valid JSON (${(err as Error).message})` };
	}
	const parsed = frameSchema.safeParse(json);
	if (!parsed.success) return { line, problem: describeZodError(parsed.error) };
	const frame = parsed.data;
	const mismatch = checkFrameAgainstRun(frame, rules.states);
	if (mismatch) return { line, problem: `${mismatch.path}: ${mismatch.message}` };
	if (prev && frame.seq <= prev.seq) {
		return {
			line,
			problem: `seq ${frame.seq} does not come after seq ${prev.seq} (line ${prev.line}): frames go one per seq, in increasing seq order`
		};
	}
	if (rules.maxSeq !== null && frame.seq > rules.maxSeq) {
		return { line, problem: `seq ${frame.seq} is above ${rules.maxSeq}${rules.maxSeqReason ? `: ${rules.maxSeqReason}` : ''}` };
	}
	return { line, frame };
}

export interface FileCheck {
	frames: number;
	badLines: number;
	/** The first MAX_LISTED_LINES problems, by line. */
	problems: LineProblem[];
}

/** First pass: every line checked, nothing kept but the problems. */
export async function checkFrameFile(stream: ReadableStream<Uint8Array>, rules: LineRules): Promise<FileCheck> {
	const result: FileCheck = { frames: 0, badLines: 0, problems: [] };
	let prev: { seq: number; line: number } | null = null;
	for await (const { line, text } of readLines(stream, MAX_LINE_CHARS)) {
		const checked = checkFrameLine(text, line, rules, prev);
		if ('frame' in checked) {
			result.frames++;
			prev = { seq: checked.frame.seq, line };
		} else if ('problem' in checked) {
			result.badLines++;
			if (result.problems.length < MAX_LISTED_LINES) result.problems.push({ line, message: checked.problem });
		}
	}
	return result;
}

/** Second pass over a file the first pass accepted: its frames in batches. */
export async function* frameBatches(stream: ReadableStream<Uint8Array>, size: number): AsyncGenerator<Frame[]> {
	let batch: Frame[] = [];
	for await (const { text } of readLines(stream, MAX_LINE_CHARS)) {
		if (text === null || text.trim() === '') continue;
		batch.push(frameSchema.parse(JSON.parse(text)));
		if (batch.length >= size) {
			yield batch;
			batch = [];
		}
	}
	if (batch.length) yield batch;
}
