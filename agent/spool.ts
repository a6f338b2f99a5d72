// The agent's durable queue: every frame is appended to an NDJSON file before it is sent and stays
// there until the server acknowledges it, so a crash, a server restart or a cut link loses nothing.
import fs from 'node:fs';
import path from 'node:path';
import { frameSchema, type Frame } from '../src/lib/protocol/index.ts';

export interface SpoolOptions {
	/** Where problems found while loading are reported (a torn last line after a crash, say). */
	log?: (line: string) => void;
	/** Rewrite the file once more than this fraction of its lines is acknowledged or dropped. */
	compactFraction?: number;
	/** …but only once at least this many lines are stale, so a steady stream does not rewrite per ack. */
	minCompactLines?: number;
	/** fsync after each append (on by default; tests may turn it off for speed). */
	sync?: boolean;
}

export class Spool {
	readonly path: string;
	private readonly frames = new Map<number, Frame>();
	private fd = -1;
	/** Lines in the file now, including those of frames already acknowledged. */
	private fileLines = 0;
	private ackedSeq = 0;
	private readonly log: (line: string) => void;
	private readonly compactFraction: number;
	private readonly minCompactLines: number;
	private readonly sync: boolean;

	private constructor(file: string, options: SpoolOptions) {
		this.path = file;
		this.log = options.log ?? (() => {});
		this.compactFraction = options.compactFraction ?? 0.5;
		this.minCompactLines = options.minCompactLines ?? 1000;
		this.sync = options.sync ?? true;
		fs.mkdirSync(path.dirname(file), { recursive: true });
		this.load();
		if (this.fd === -1) this.fd = fs.openSync(file, 'a');
	}

	/** Opens (creating if needed) the spool at `file` and loads the frames it still holds. */
	static open(file: string, options: SpoolOptions = {}): Spool {
		return new Spool(file, options);
	}

	private load() {
		let text: string;
		try {
			text = fs.readFileSync(this.path, 'utf8');
		} catch (err) {
			if ((err as NodeJS.ErrnoException).code === 'ENOENT') return;
			throw err;
		}
		const lines = text.split('\n');
		const tornTail = !text.endsWith('\n') && lines[lines.length - 1] !== '';
		let skipped = 0;
		lines.forEach((line, i) => {
			if (line.trim() === '') return;
			this.fileLines += 1;
			let json: unknown;
			try {
				json = JSON.parse(line);
			} catch {
				skipped += 1;
				if (!(tornTail && i === lines.length - 1)) this.log(`spool ${this.path}: line ${i + 1} is not JSON; skipped`);
				return;
			}
			const parsed = frameSchema.safeParse(json);
			if (!parsed.success) {
				skipped += 1;
				this.log(`spool ${this.path}: line ${i + 1} is not a frame; skipped`);
				return;
			}
			this.frames.set(parsed.data.seq, parsed.data);
		});
		// A line cut short by a crash would glue itself to the next append: start afresh.
		if (tornTail || skipped > 0) {
			if (tornTail) this.log(`spool ${this.path}: last line was cut short (crash while writing?); dropped it`);
			this.rewrite();
		}
	}

	/** Number of frames waiting for an ack. */
	get size(): number {
		return this.frames.size;
	}

	/** Highest seq held (0 if empty). */
	get highestSeq(): number {
		let max = 0;
		for (const seq of this.frames.keys()) if (seq > max) max = seq;
		return max;
	}

	/** Highest seq acknowledged during this process's life (0 before the first ack). */
	get acknowledgedSeq(): number {
		return this.ackedSeq;
	}

	has(seq: number): boolean {
		return this.frames.has(seq);
	}

	/**
	 * Appends the frames whose seq is neither held nor acknowledged already, and returns those.
	 * The frames are on disk (fsynced) when this returns.
	 */
	add(frames: readonly Frame[]): Frame[] {
		const fresh: Frame[] = [];
		const batch = new Set<number>();
		for (const frame of frames) {
			if (frame.seq <= this.ackedSeq || this.frames.has(frame.seq) || batch.has(frame.seq)) continue;
			batch.add(frame.seq);
			fresh.push(frame);
		}
		if (fresh.length === 0) return fresh;
		fs.writeSync(this.fd, fresh.map((f) => JSON.stringify(f) + '\n').join(''));
		if (this.sync) fs.fdatasyncSync(this.fd);
		for (const frame of fresh) this.frames.set(frame.seq, frame);
		this.fileLines += fresh.length;
		return fresh;
	}

	/** Frames with seq > `after`, in seq order. */
	pending(after = 0): Frame[] {
		return [...this.frames.values()].filter((f) => f.seq > after).sort((a, b) => a.seq - b.seq);
	}

	/** Cumulative ack: forgets every frame up to `seq`. Returns how many were removed. */
	ack(seq: number): number {
		if (seq > this.ackedSeq) this.ackedSeq = seq;
		let removed = 0;
		for (const s of this.frames.keys()) {
			if (s <= seq) {
				this.frames.delete(s);
				removed += 1;
			}
		}
		if (removed > 0) this.maybeCompact();
		return removed;
	}

	/**
	 * Forgets one frame the server will never accept, and rewrites the file at once so that a
	 * restart does not send it again.
	 */
	drop(seq: number): boolean {
		if (!this.frames.delete(seq)) return false;
		this.rewrite();
		return true;
	}

	private maybeCompact() {
		const stale = this.fileLines - this.frames.size;
		if (stale >= this.minCompactLines && stale > this.fileLines * this.compactFraction) this.rewrite();
	}

	/** Rewrites the file with exactly the frames still held: temporary file, fsync, rename. */
	compact(): void {
		this.rewrite();
	}

	private rewrite() {
		const tmp = `${this.path}.tmp`;
		const body = this.pending()
			.map((f) => JSON.stringify(f) + '\n')
			.join('');
		const fd = fs.openSync(tmp, 'w');
		try {
			fs.writeSync(fd, body);
			fs.fsyncSync(fd);
		} finally {
			fs.closeSync(fd);
		}
		fs.renameSync(tmp, this.path);
		this.fileLines = this.frames.size;
		// The old descriptor points at the replaced file; appends must go to the new one.
		if (this.fd !== -1) fs.closeSync(this.fd);
		this.fd = fs.openSync(this.path, 'a');
	}

	/** Lines in the file, acknowledged or not (for tests and the log). */
	get linesOnDisk(): number {
		return this.fileLines;
	}

	/** Compacts if anything is stale and closes the file; the spool is unusable afterwards. */
	close(): void {
		if (this.fd === -1) return;
		if (this.fileLines > this.frames.size) this.rewrite();
		if (this.fd !== -1) {
			fs.closeSync(this.fd);
			this.fd = -1;
		}
	}
}
