// Sums over the last N windows in O(1) per window, kept as plain JSON inside a detector's state.
//
// Each row has `width` columns; the first `summed` are kept as running sums, the rest (e.g. seq
// and t) are only stored so evidence can name the windows. Adding and subtracting floating-point
// values leaves rounding residue, so the sums are recomputed from the stored rows each time the
// write position wraps: O(width) amortised per window, and restore/replay see the same numbers.
import { z } from 'zod';

export const slidingSchema = z.object({
	size: z.number().int().min(1),
	width: z.number().int().min(1),
	summed: z.number().int().min(0),
	/** Next row to write. */
	head: z.number().int().min(0),
	/** Rows held, ≤ size. */
	len: z.number().int().min(0),
	/** size × width values, row-major. */
	rows: z.array(z.number()),
	sums: z.array(z.number())
});
export type Sliding = z.infer<typeof slidingSchema>;

export function createSliding(size: number, width: number, summed = width): Sliding {
	return { size, width, summed, head: 0, len: 0, rows: new Array<number>(size * width).fill(0), sums: new Array<number>(summed).fill(0) };
}

/** Appends one row (length `width`), dropping the oldest when full. */
export function pushRow(s: Sliding, row: readonly number[]): void {
	const base = s.head * s.width;
	const full = s.len === s.size;
	for (let c = 0; c < s.width; c++) {
		if (c < s.summed) s.sums[c] += row[c] - (full ? s.rows[base + c] : 0);
		s.rows[base + c] = row[c];
	}
	s.head = s.head + 1 === s.size ? 0 : s.head + 1;
	if (!full) s.len += 1;
	if (s.head === 0) resum(s);
}

function resum(s: Sliding): void {
	for (let c = 0; c < s.summed; c++) {
		let sum = 0;
		for (let r = 0; r < s.len; r++) sum += s.rows[r * s.width + c];
		s.sums[c] = sum;
	}
}

/** Row index (0 = oldest held) → value of column c. */
export function valueAt(s: Sliding, index: number, c: number): number {
	const start = s.len === s.size ? s.head : 0;
	return s.rows[((start + index) % s.size) * s.width + c];
}

export function oldest(s: Sliding, c: number): number {
	return valueAt(s, 0, c);
}

export function newest(s: Sliding, c: number): number {
	return valueAt(s, s.len - 1, c);
}

export function clearSliding(s: Sliding): void {
	s.head = 0;
	s.len = 0;
	s.rows.fill(0);
	s.sums.fill(0);
}
