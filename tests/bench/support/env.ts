// Sizes of a benchmark, stated as constants at the top of each script and overridable by the
// environment for a longer run (e.g. BENCH_BULK_FRAMES=200000 npx tsx tests/bench/bulk-ingest.bench.ts).

/** A positive number from the environment, or the default; a malformed value is an error, not a silent default. */
export function sizeFromEnv(name: string, fallback: number): number {
	const raw = process.env[name];
	if (raw === undefined || raw === '') return fallback;
	const value = Number(raw);
	if (!Number.isFinite(value) || value <= 0) throw new Error(`${name}: expected a positive number, got "${raw}"`);
	return value;
}

export const sleep = (ms: number) => new Promise<void>((resolve) => setTimeout(resolve, ms));
