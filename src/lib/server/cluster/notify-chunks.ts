// PostgreSQL's NOTIFY carries at most 8000 bytes, and a commit's frames can be far more. A message
// is cut into numbered parts sent in order from one connection (PostgreSQL delivers one session's
// notifications in the order they were sent), and put together again on the other side.
// Written by hand: the framing is four fields and a join, smaller than any package for it.

/** Bytes of text per part, leaving room for the header under PostgreSQL's 8000-byte limit. */
export const PART_BYTES = 7000;

/** One part: `from|message id|index|count|text`. */
export function splitMessage(from: string, messageId: number, text: string, partBytes = PART_BYTES): string[] {
	if (from.includes('|')) throw new Error(`instance id must not contain "|": ${from}`);
	const parts: string[] = [];
	let current = '';
	let bytes = 0;
	// By code point, so no character (or surrogate pair) is cut in two.
	for (const ch of text) {
		const size = Buffer.byteLength(ch);
		if (bytes + size > partBytes && current) {
			parts.push(current);
			current = '';
			bytes = 0;
		}
		current += ch;
		bytes += size;
	}
	parts.push(current);
	return parts.map((p, i) => `${from}|${messageId}|${i}|${parts.length}|${p}`);
}

export interface Assembled {
	from: string;
	text: string;
}

/** Collects parts per sender; returns a whole message when its last part arrives. */
export class PartAssembler {
	private pending = new Map<string, { next: number; texts: string[] }>();

	/** Returns the message this part completes, null while parts are missing; throws on a malformed part. */
	add(payload: string): Assembled | null {
		const m = /^([^|]*)\|(\d+)\|(\d+)\|(\d+)\|/s.exec(payload);
		if (!m) throw new Error(`cluster message: not a part (${payload.slice(0, 40)}…)`);
		const [head, from, id, indexText, countText] = m;
		const index = Number(indexText);
		const count = Number(countText);
		const text = payload.slice(head.length);
		if (count === 1) return { from, text };
		const key = `${from}|${id}`;
		let entry = this.pending.get(key);
		if (index === 0) {
			entry = { next: 0, texts: [] };
			this.pending.set(key, entry);
		}
		// A part out of turn means an earlier one was lost (a reconnect): the message is dropped.
		if (!entry || entry.next !== index) {
			this.pending.delete(key);
			return null;
		}
		entry.texts.push(text);
		entry.next++;
		if (entry.next < count) return null;
		this.pending.delete(key);
		return { from, text: entry.texts.join('') };
	}

	/** Drops half-received messages (after the connection was lost, their rest will never come). */
	clear() {
		this.pending.clear();
	}
}
