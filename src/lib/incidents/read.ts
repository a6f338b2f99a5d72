// Careful readers of stored evidence: it is JSON written by some version of a detector, so every
// field may be missing or of another type; a reader returns null rather than guessing.
export type Json = Record<string, unknown>;

export const isObject = (v: unknown): v is Json => typeof v === 'object' && v !== null && !Array.isArray(v);

/** The value at a dotted path ("sinceChange.observed"), or undefined. */
export function at(ev: unknown, path: string): unknown {
	let cur: unknown = ev;
	for (const part of path.split('.')) {
		if (!isObject(cur)) return undefined;
		cur = cur[part];
	}
	return cur;
}

export function numAt(ev: unknown, path: string): number | null {
	const v = at(ev, path);
	return typeof v === 'number' && Number.isFinite(v) ? v : null;
}

export function strAt(ev: unknown, path: string): string | null {
	const v = at(ev, path);
	return typeof v === 'string' ? v : null;
}

export function objAt(ev: unknown, path: string): Json | null {
	const v = at(ev, path);
	return isObject(v) ? v : null;
}

export function listAt(ev: unknown, path: string): Json[] {
	const v = at(ev, path);
	return Array.isArray(v) ? v.filter(isObject) : [];
}

export function numbersAt(ev: unknown, path: string): number[] | null {
	const v = at(ev, path);
	return Array.isArray(v) && v.every((x) => typeof x === 'number') ? (v as number[]) : null;
}
