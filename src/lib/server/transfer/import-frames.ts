// Import of an NDJSON file of wire frames into a run of a setup: a first pass checks every line
// (nothing is stored unless every line is a frame the run accepts), a second pass hands the frames
// in batches to the run's writer, which stores them as historical data (never fed to the live
// detectors), fills the run's gaps with them and skips seqs it already holds.
import { randomUUID } from 'node:crypto';
import { and, eq } from 'drizzle-orm';
import { z } from 'zod';
import { safeText } from '../../protocol/safe-text';
import { checkFrameFile, frameBatches, MAX_LISTED_LINES, type LineProblem, type LineRules } from '../../transfer/frame-lines';
import type { Db } from '../db';
import { runs } from '../db/schema';
import type { Ingest } from '../ingest/ingest';
import { endRun, findOrCreateRun, getRun, type RunRow } from '../runs/service';
import { getSetup } from '../setups/service';

export const IMPORT_BATCH_FRAMES = 500;
/** Duplicate seq ranges listed in the outcome; their count is always given. */
const MAX_LISTED_RANGES = 100;

export const runKeySchema = safeText(z.string().trim().min(1, 'run key must not be empty').max(200, 'run key is at most 200 characters'));

export class ImportRefused extends Error {
	constructor(
		public status: number,
		message: string,
		public lines: LineProblem[] = []
	) {
		super(message);
	}
}

export interface ImportOutcome {
	runId: string;
	runKey: string;
	created: boolean;
	frames: number;
	stored: number;
	filledGaps: number;
	duplicates: number;
	/** Runs of consecutive duplicate seqs, [from, to], the first MAX_LISTED_RANGES. */
	duplicateRanges: [number, number][];
	gapsBefore: number;
	gapsAfter: number;
}

export type ImportPhase = { phase: 'checking' } | { phase: 'storing'; done: number; total: number };

function rulesFor(run: RunRow | null, states: number): LineRules {
	if (!run || run.status === 'ended') return { states: run?.states ?? states, maxSeq: null };
	return {
		states: run.states,
		maxSeq: run.lastSeq,
		maxSeqReason: `run "${run.key}" is still open, so its agent sends the frames after its last stored seq itself; import into its gaps only, or end the run first`
	};
}

function cleanName(fileName: string) {
	const base =
		fileName
			// Control characters are what this strips: a file name is shown back and written into headers.
			// eslint-disable-next-line no-control-regex
			.replace(/[\u0000-\u001f\u007f]/g, '')
			.replace(/[\ud800-\udfff]/g, '')
			.trim() || 'a file';
	return `Imported from ${base}`.slice(0, 200);
}

async function newRunFor(
	db: Db,
	setup: NonNullable<Awaited<ReturnType<typeof getSetup>>>,
	key: string | undefined,
	fileName: string,
	now: Date
) {
	const stamp = now.toISOString().slice(0, 19).replace(/[-:]/g, '').replace('T', '-');
	const run = await findOrCreateRun(
		db,
		setup.id,
		{
			key: key ?? `import-${stamp}-${randomUUID().slice(0, 4)}`,
			name: cleanName(fileName),
			order: setup.order,
			states: setup.states,
			mode_GHz: setup.modeGHz
		},
		'file import'
	);
	// No agent will stream it: ended at once, so no silence alarm is raised while it fills.
	return (await endRun(db, run.id, 'imported from a file')) ?? run;
}

export async function importFrameFile(
	ctx: { db: Db; ingest: Ingest },
	setupId: string,
	file: Blob,
	options: { runKey?: string; fileName: string; now?: Date; onPhase?: (p: ImportPhase) => void }
): Promise<ImportOutcome> {
	const { db, ingest } = ctx;
	const setup = await getSetup(db, setupId);
	if (!setup) throw new ImportRefused(404, 'no setup with this id');
	const [existing] = options.runKey
		? await db
				.select()
				.from(runs)
				.where(and(eq(runs.setupId, setupId), eq(runs.key, options.runKey)))
		: [];
	options.onPhase?.({ phase: 'checking' });
	const check = await checkFrameFile(file.stream(), rulesFor(existing ?? null, setup.states));
	if (check.badLines > 0) {
		const listed = check.badLines > MAX_LISTED_LINES ? ` (the first ${MAX_LISTED_LINES} are listed)` : '';
		throw new ImportRefused(
			400,
			`${check.badLines} line${check.badLines === 1 ? ' is' : 's are'} not frames this run accepts${listed}; nothing was stored`,
			check.problems
		);
	}
	if (check.frames === 0) throw new ImportRefused(400, 'the file holds no frames (one JSON frame per line expected); nothing was stored');

	const run = existing ?? (await newRunFor(db, setup, options.runKey, options.fileName, options.now ?? new Date()));
	if (run.states !== (existing?.states ?? setup.states))
		throw new ImportRefused(409, `run "${run.key}" has ${run.states} states; nothing was stored`);
	const outcome: ImportOutcome = {
		runId: run.id,
		runKey: run.key,
		created: !existing,
		frames: check.frames,
		stored: 0,
		filledGaps: 0,
		duplicates: 0,
		duplicateRanges: [],
		gapsBefore: run.gapCount,
		gapsAfter: run.gapCount
	};
	let done = 0;
	options.onPhase?.({ phase: 'storing', done, total: check.frames });
	await ingest.importFrames(run.id, frameBatches(file.stream(), IMPORT_BATCH_FRAMES), (batch, frames) => {
		outcome.stored += batch.stored;
		outcome.filledGaps += batch.filledGaps;
		outcome.duplicates += batch.duplicates.length;
		for (const seq of batch.duplicates) addToRanges(outcome.duplicateRanges, seq);
		done += frames;
		options.onPhase?.({ phase: 'storing', done, total: check.frames });
	});
	outcome.gapsAfter = (await getRun(db, run.id))?.gapCount ?? outcome.gapsAfter;
	return outcome;
}

function addToRanges(ranges: [number, number][], seq: number) {
	const last = ranges.at(-1);
	if (last && seq === last[1] + 1) last[1] = seq;
	else if (ranges.length < MAX_LISTED_RANGES) ranges.push([seq, seq]);
}
