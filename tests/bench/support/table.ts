// The house table of a benchmark: one row per measure, the app against a baseline timed in the same
// run, the ratio and whether it meets the target. Markdown, so a run can be pasted into an issue.

export interface BenchRow {
	measure: string;
	app: number;
	baseline: number;
	/** Unit of app and baseline, shown beside the numbers. */
	unit: string;
	/** app ÷ baseline unless given, e.g. the median of paired ratios of interleaved trials. */
	ratio?: number;
	/** How the ratio or value is judged, e.g. { on: 'ratio', atLeast: 0.6 }. */
	target: Target;
}

export type Target =
	| { on: 'ratio'; atLeast: number }
	| { on: 'ratio'; atMost: number }
	| { on: 'app'; atMost: number; unit: string }
	| { on: 'difference'; atMost: number; unit: string }
	| { on: 'none' };

function fmt(x: number): string {
	if (!Number.isFinite(x)) return String(x);
	const a = Math.abs(x);
	if (a >= 1000) return Math.round(x).toLocaleString('en-US');
	if (a >= 100) return x.toFixed(0);
	if (a >= 10) return x.toFixed(1);
	if (a >= 1) return x.toFixed(2);
	return x.toPrecision(2);
}

function judge(row: BenchRow, ratio: number): { target: string; verdict: string } {
	const t = row.target;
	if (t.on === 'none') return { target: '(reference)', verdict: '' };
	if (t.on === 'difference')
		return { target: `app − baseline ≤ ${fmt(t.atMost)} ${t.unit}`, verdict: row.app - row.baseline <= t.atMost ? 'pass' : 'FAIL' };
	if (t.on === 'app') return { target: `≤ ${fmt(t.atMost)} ${t.unit}`, verdict: row.app <= t.atMost ? 'pass' : 'FAIL' };
	if ('atLeast' in t) return { target: `ratio ≥ ${t.atLeast}`, verdict: ratio >= t.atLeast ? 'pass' : 'FAIL' };
	return { target: `ratio ≤ ${t.atMost}`, verdict: ratio <= t.atMost ? 'pass' : 'FAIL' };
}

/** Prints the table and returns how many rows failed their target. */
export function printTable(title: string, rows: BenchRow[], notes: string[] = []): number {
	let failed = 0;
	const lines = [`### ${title}`, '', '| measure | app | baseline | ratio | target | result |', '| --- | ---: | ---: | ---: | --- | --- |'];
	for (const row of rows) {
		const ratio = row.ratio ?? row.app / row.baseline;
		const { target, verdict } = judge(row, ratio);
		if (verdict === 'FAIL') failed++;
		lines.push(
			`| ${row.measure} | ${fmt(row.app)} ${row.unit} | ${fmt(row.baseline)} ${row.unit} | ${fmt(ratio)} | ${target} | ${verdict} |`
		);
	}
	if (notes.length) lines.push('', ...notes.map((n) => `- ${n}`));
	console.log(lines.join('\n') + '\n');
	return failed;
}
