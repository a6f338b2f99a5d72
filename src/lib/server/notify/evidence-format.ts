// Turns an incident's evidence (plain JSON from a detector) into labelled facts and small tables
// that both the text and the HTML form of an alert can lay out.

export type EvidenceTable = { title: string; columns: string[]; rows: string[][] };
export type EvidenceView = { rule?: string; version?: number; facts: [string, string][]; tables: EvidenceTable[] };

const LABELS: Record<string, string> = {
	threshold: 'Threshold',
	windows: 'Windows to open',
	clearThreshold: 'Clear threshold',
	clearWindows: 'Windows to clear',
	count: 'Windows counted',
	skippedWindows: 'Empty windows passed over',
	windowsOpen: 'Windows while open',
	lowest: 'Lowest value',
	values: 'Last values',
	after_s: 'Silence limit',
	silence_s: 'Silence',
	lastFrameAt_ms: 'Last frame received',
	lastFrameT_ms: 'Last frame time (agent clock)',
	lastSeq: 'Last seq',
	resumedAt_ms: 'Frames resumed',
	resumedSeq: 'Resumed at seq',
	endedAt_ms: 'Run ended',
	reason: 'Reason',
	explainedByTemperature: 'Explained by temperature',
	temperatureShare: 'Share of the excess the temperature carries',
	temperatureShareInterval: 'Temperature share interval',
	residualRatio: 'Rate factor temperature leaves unexplained',
	residualInterval: 'Unexplained factor interval',
	temperatureFit: 'Temperature fit'
};

const COLUMNS: Record<string, string> = { seq: 'seq', t_ms: 'time (UTC)', lock: 'lock' };

/** "lastFrameAt_ms" → "Last frame at"; unit suffixes are shown with the value instead. */
export function labelFor(key: string): string {
	if (LABELS[key]) return LABELS[key];
	const words = key
		.replace(/_(ms|s)$/, '')
		.replace(/([a-z0-9])([A-Z])/g, '$1 $2')
		.replace(/_/g, ' ')
		.toLowerCase();
	return words.charAt(0).toUpperCase() + words.slice(1);
}

/** "2025-06-15 03:12:45 UTC" (milliseconds shown only when there are some). */
export function formatUtc(ms: number): string {
	const iso = new Date(ms).toISOString();
	return `${iso.slice(0, 10)} ${iso.endsWith('.000Z') ? iso.slice(11, 19) : iso.slice(11, 23)} UTC`;
}

const looksLikeEpoch = (key: string, v: number) => (key.endsWith('_ms') || key === 't') && v > 1e11 && v < 1e14;

export function formatValue(key: string, value: unknown): string {
	// The temperature fit's third answer: null means the data cannot decide, not "missing".
	if (value === null && key === 'explainedByTemperature') return 'cannot tell';
	if (value === null || value === undefined) return '—';
	if (typeof value === 'boolean') return value ? 'yes' : 'no';
	if (typeof value === 'number') {
		if (!Number.isFinite(value)) return String(value);
		if (looksLikeEpoch(key, value)) return formatUtc(value);
		const shown = Number.isInteger(value) ? String(value) : String(Number(value.toPrecision(4)));
		if (key.endsWith('_ms')) return `${shown} ms`;
		if (key.endsWith('_s')) return `${shown} s`;
		return shown;
	}
	if (typeof value === 'string') return value;
	if (Array.isArray(value)) return value.length ? value.map((v) => formatValue(key, v)).join(', ') : '—';
	if (typeof value === 'object') {
		return Object.entries(value as Record<string, unknown>)
			.map(([k, v]) => `${COLUMNS[k] ?? labelFor(k).toLowerCase()} ${formatValue(k, v)}`)
			.join(', ');
	}
	return String(value);
}

const isRecord = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);

function tableFor(key: string, rows: Record<string, unknown>[], evidence: Record<string, unknown>): EvidenceTable {
	const keys = [...new Set(rows.flatMap((r) => Object.keys(r)))];
	const columns = keys.map((k) => COLUMNS[k] ?? labelFor(k).toLowerCase());
	const threshold = typeof evidence.threshold === 'number' ? evidence.threshold : undefined;
	// Lock values are read against the opening threshold, so the reader sees why the rule fired.
	const compare = threshold !== undefined && keys.includes('lock');
	if (compare) columns.push(`vs threshold ${formatValue('threshold', threshold)}`);
	return {
		title: labelFor(key),
		columns,
		rows: rows.map((r) => {
			const cells = keys.map((k) => formatValue(k, r[k]));
			if (compare) cells.push(typeof r.lock === 'number' ? (r.lock < threshold! ? 'below' : 'at or above') : '—');
			return cells;
		})
	};
}

export function viewEvidence(evidence: Record<string, unknown>): EvidenceView {
	const view: EvidenceView = { facts: [], tables: [] };
	if (typeof evidence.rule === 'string') view.rule = evidence.rule;
	if (typeof evidence.version === 'number') view.version = evidence.version;
	for (const [key, value] of Object.entries(evidence)) {
		if (key === 'rule' || key === 'version') continue;
		if (Array.isArray(value) && value.length > 0 && value.every(isRecord)) {
			view.tables.push(tableFor(key, value, evidence));
		} else {
			view.facts.push([labelFor(key), formatValue(key, value)]);
		}
	}
	return view;
}
