// Which stored rollup buckets cover a span [from_ms, to_ms) with the fewest rows: coarse buckets
// for the interior, finer ones at the edges. The span is first widened to the finest resolution's
// bucket edges (a summary never splits a bucket, so it covers whole buckets and says which).
// Resolutions must nest (each divides the next, as 10 | 60 | 600 | 3600 s do).

export type CoverPiece = { resolution_s: number; from_ms: number; to_ms: number };
export type SpanCover = { from_ms: number; to_ms: number; pieces: CoverPiece[] };

export function coverSpan(from_ms: number, to_ms: number, resolutions_s: readonly number[]): SpanCover {
	if (!Number.isFinite(from_ms) || !Number.isFinite(to_ms))
		throw new RangeError(`span: from_ms ${from_ms} and to_ms ${to_ms} must be finite ms`);
	if (to_ms <= from_ms) throw new RangeError(`span: to_ms (${to_ms}) must be after from_ms (${from_ms})`);
	const sorted = [...resolutions_s].sort((a, b) => a - b);
	if (sorted.length === 0) throw new RangeError('span: at least one resolution is needed');
	for (let i = 1; i < sorted.length; i++) {
		if (sorted[i] % sorted[i - 1] !== 0) throw new RangeError(`span: resolution ${sorted[i]} s is not a multiple of ${sorted[i - 1]} s`);
	}
	const fine_ms = sorted[0] * 1000;
	const from = Math.floor(from_ms / fine_ms) * fine_ms;
	const to = Math.ceil(to_ms / fine_ms) * fine_ms;
	const pieces: CoverPiece[] = [];
	cover(from, to, sorted.length - 1);
	pieces.sort((a, b) => a.from_ms - b.from_ms);
	return { from_ms: from, to_ms: to, pieces };

	// Whole buckets of resolution `level` inside [a, b); the ragged ends go one level finer.
	function cover(a: number, b: number, level: number) {
		if (a >= b) return;
		const width = sorted[level] * 1000;
		if (level === 0) {
			pieces.push({ resolution_s: sorted[0], from_ms: a, to_ms: b });
			return;
		}
		const innerFrom = Math.ceil(a / width) * width;
		const innerTo = Math.floor(b / width) * width;
		if (innerFrom >= innerTo) {
			cover(a, b, level - 1);
			return;
		}
		cover(a, innerFrom, level - 1);
		pieces.push({ resolution_s: sorted[level], from_ms: innerFrom, to_ms: innerTo });
		cover(innerTo, b, level - 1);
	}
}
