// Arguments of `npm run rollups:rebuild`, parsed apart from the command so bad input is tested
// without a data directory.
import { parseArgs } from 'node:util';

export const REBUILD_USAGE = 'usage: npm run rollups:rebuild -- --run ID | --all [--force]';

export type RebuildArgs = { target: { runId: string } | { all: true }; force: boolean };

/** Throws a RangeError naming the problem (the caller prints it with the usage line). */
export function parseRebuildArgs(argv: string[]): RebuildArgs {
	let values: { run?: string; all?: boolean; force?: boolean };
	try {
		({ values } = parseArgs({
			args: argv,
			options: { run: { type: 'string' }, all: { type: 'boolean' }, force: { type: 'boolean' } },
			strict: true,
			allowPositionals: false
		}));
	} catch (err) {
		throw new RangeError((err as Error).message, { cause: err });
	}
	if (values.run !== undefined && values.all) throw new RangeError('give either --run ID or --all, not both');
	if (values.run !== undefined) {
		const runId = values.run.trim();
		if (!runId) throw new RangeError('--run needs a run id');
		return { target: { runId }, force: values.force ?? false };
	}
	if (values.all) return { target: { all: true }, force: values.force ?? false };
	throw new RangeError('say which runs to rebuild: --run ID or --all');
}
