// The seq ranges a run is missing, kept in memory by the run's writer: a frame whose seq falls in
// one is late data to store (the range shrinks or splits); any other seq at or below the last is a
// duplicate. Pure, so the bookkeeping is tested apart from the database.

export interface SeqGap {
	fromSeq: number;
	toSeq: number;
	detectedAt: Date;
}

export type GapChange = { removed: SeqGap; added: SeqGap[] };

export class SeqGaps {
	/** Sorted by fromSeq, never overlapping. */
	#gaps: SeqGap[];

	constructor(gaps: readonly SeqGap[] = []) {
		this.#gaps = [...gaps].sort((a, b) => a.fromSeq - b.fromSeq);
	}

	get count() {
		return this.#gaps.length;
	}

	list(): readonly SeqGap[] {
		return this.#gaps;
	}

	#indexOf(seq: number): number {
		let lo = 0;
		let hi = this.#gaps.length - 1;
		while (lo <= hi) {
			const mid = (lo + hi) >> 1;
			const g = this.#gaps[mid];
			if (seq < g.fromSeq) hi = mid - 1;
			else if (seq > g.toSeq) lo = mid + 1;
			else return mid;
		}
		return -1;
	}

	contains(seq: number): boolean {
		return this.#indexOf(seq) >= 0;
	}

	/** Records a new missing range above every existing one (frames arrive in seq order). */
	add(fromSeq: number, toSeq: number, detectedAt: Date): SeqGap {
		const last = this.#gaps.at(-1);
		if (toSeq < fromSeq) throw new RangeError(`gap ${fromSeq}–${toSeq}: from must not exceed to`);
		if (last && fromSeq <= last.toSeq) throw new RangeError(`gap ${fromSeq}–${toSeq} overlaps ${last.fromSeq}–${last.toSeq}`);
		const gap = { fromSeq, toSeq, detectedAt };
		this.#gaps.push(gap);
		return gap;
	}

	/** A late frame arrived: the range holding `seq` shrinks or splits. Null when seq is in no gap. */
	fill(seq: number): GapChange | null {
		const i = this.#indexOf(seq);
		if (i < 0) return null;
		const removed = this.#gaps[i];
		const added: SeqGap[] = [];
		if (removed.fromSeq < seq) added.push({ fromSeq: removed.fromSeq, toSeq: seq - 1, detectedAt: removed.detectedAt });
		if (seq < removed.toSeq) added.push({ fromSeq: seq + 1, toSeq: removed.toSeq, detectedAt: removed.detectedAt });
		this.#gaps.splice(i, 1, ...added);
		return { removed, added };
	}
}
