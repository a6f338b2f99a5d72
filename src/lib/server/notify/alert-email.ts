// The alert e-mail for an incident (and the notice when its condition clears): pure text in,
// subject, plain text and HTML out. What happened is told in the same sentences as on the
// incident page ($lib/incidents/describe), never as the detector's field names.
import { describeIncident, type Description } from '../../incidents/describe';
import type { GroupMember } from '../../incidents/group-message';
import { kindLabel } from '../../incidents/kinds';

export type IncidentForEmail = {
	id: string;
	kind: string;
	severity: string;
	/** The detector's one-line summary; kept for the record, the e-mail tells it in sentences. */
	summary: string;
	key?: string | null;
	openedAt: Date | string | number;
	evidence: Record<string, unknown>;
};

export type IncidentEmailInput = {
	incident: IncidentForEmail;
	run: { id: string; name: string };
	setup: { id: string; name: string };
	appOrigin: string;
	/** A one-tap acknowledge link; alerts carry one, clear notices do not. */
	acknowledgeUrl?: string;
	/**
	 * Every incident of the group this alert pages for (one cause, one page), `incident` among
	 * them; absent or of one member when the incident opened alone.
	 */
	group?: GroupMember[];
};

export type ClearedEmailInput = IncidentEmailInput & {
	cleared: { at: Date | string | number; summary: string; evidence?: Record<string, unknown> };
};

export type RenderedEmail = { subject: string; text: string; html: string };

export const MONITOR_CAUTION =
	'Phasewarden is a monitor, not a safety interlock: the cryostat, its helium handling and the microwave sources keep their own interlocks and the lab’s safety rules.';

export { kindLabel };

const DAYS = ['Sunday', 'Monday', 'Tuesday', 'Wednesday', 'Thursday', 'Friday', 'Saturday'];
const MONTHS = ['January', 'February', 'March', 'April', 'May', 'June', 'July', 'August', 'September', 'October', 'November', 'December'];

function toDate(value: Date | string | number, what: string): Date {
	const d = value instanceof Date ? value : new Date(value);
	if (Number.isNaN(d.getTime())) throw new RangeError(`alert e-mail: ${what} is not a valid time: ${String(value)}`);
	return d;
}

/** "Sunday 15 June 2025, 03:12:45 UTC": written out by hand so it reads the same on every server. */
export function humanUtc(d: Date): string {
	const pad = (n: number) => String(n).padStart(2, '0');
	return `${DAYS[d.getUTCDay()]} ${d.getUTCDate()} ${MONTHS[d.getUTCMonth()]} ${d.getUTCFullYear()}, ${pad(d.getUTCHours())}:${pad(d.getUTCMinutes())}:${pad(d.getUTCSeconds())} UTC`;
}

const oneLine = (s: string) => s.replace(/[\r\n]+/g, ' ').trim();

const escapeHtml = (s: string) =>
	s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&#39;');

export function incidentUrl(appOrigin: string, id: string): string {
	return `${appOrigin.replace(/\/+$/, '')}/incidents/${encodeURIComponent(id)}`;
}

// ---- plain text -------------------------------------------------------------------------------

function alignRows(rows: string[][], indent = '  '): string[] {
	const widths = rows[0].map((_, c) => Math.max(...rows.map((r) => (r[c] ?? '').length)));
	return rows.map(
		(r) =>
			indent +
			r
				.map((cell, c) => (c === r.length - 1 ? cell : cell.padEnd(widths[c])))
				.join('  ')
				.trimEnd()
	);
}

/** Sentences wrapped at 78 columns, as mail clients show plain text best. */
function wrap(sentence: string, width = 78): string[] {
	const lines: string[] = [];
	let line = '';
	for (const word of sentence.split(/\s+/)) {
		if (line && line.length + 1 + word.length > width) {
			lines.push(line);
			line = word;
		} else line = line ? `${line} ${word}` : word;
	}
	if (line) lines.push(line);
	return lines;
}

function descriptionText(d: Description, version: number | undefined): string[] {
	const lines = ['What happened', ...wrap(d.what)];
	if (d.details.length)
		lines.push('', 'What the detector saw', ...d.details.flatMap((s) => wrap(`- ${s}`).map((l, i) => (i === 0 ? l : `  ${l}`))));
	if (version !== undefined) lines.push('', `Detector rule version ${version}.`);
	return lines;
}

const GROUP_HEADING = 'In this alert (opened together on this run, one page for all)';

function groupLine(m: GroupMember): string {
	const opened = toDate(m.openedAt, 'group member openedAt').toISOString();
	return `${kindLabel(m.kind)}, ${m.severity}, opened ${opened}: ${oneLine(m.summary)}`;
}

/** Each member with its own link, so a reader can open any of them from the one page they got. */
function groupText(group: GroupMember[], appOrigin: string): string[] {
	if (group.length < 2) return [];
	return [
		'',
		GROUP_HEADING,
		...group.flatMap((m) => [...wrap(`- ${groupLine(m)}`).map((l, i) => (i === 0 ? l : `  ${l}`)), `  ${incidentUrl(appOrigin, m.id)}`])
	];
}

// ---- HTML -------------------------------------------------------------------------------------

function groupHtml(group: GroupMember[], appOrigin: string): string {
	if (group.length < 2) return '';
	return `<h2 style="font-size:15px;margin:20px 0 6px">${escapeHtml(GROUP_HEADING)}</h2><ul style="margin:0;padding-left:20px">${group
		.map((m) => `<li style="margin:0 0 4px"><a href="${escapeHtml(incidentUrl(appOrigin, m.id))}">${escapeHtml(groupLine(m))}</a></li>`)
		.join('')}</ul>`;
}

const cell = 'padding:3px 10px;border-bottom:1px solid #d8dde3;text-align:left;font-variant-numeric:tabular-nums';

function descriptionHtml(d: Description, version: number | undefined): string {
	const details = d.details.length
		? `<h2 style="font-size:15px;margin:20px 0 6px">What the detector saw</h2><ul style="margin:0;padding-left:20px">${d.details.map((x) => `<li style="margin:0 0 4px">${escapeHtml(x)}</li>`).join('')}</ul>`
		: '';
	const rule = version !== undefined ? `<p style="margin:10px 0 0;color:#5a6573">Detector rule version ${version}.</p>` : '';
	return `<h2 style="font-size:15px;margin:20px 0 6px">What happened</h2><p style="margin:0">${escapeHtml(d.what)}</p>${details}${rule}`;
}

function page(title: string, body: string): string {
	return `<!doctype html><html><head><meta charset="utf-8"><title>${escapeHtml(title)}</title></head><body style="font-family:system-ui,sans-serif;font-size:14px;color:#1b2129;line-height:1.45;max-width:640px">${body}</body></html>`;
}

// ---- composition ------------------------------------------------------------------------------

type Section = { label: string; iso: string; human: string };

function compose(
	input: IncidentEmailInput,
	opts: { subjectTag: string; headline: string; when: Section[]; evidence: Record<string, unknown>; what?: string }
): RenderedEmail {
	const { incident, run, setup } = input;
	const kind = kindLabel(incident.kind);
	const link = incidentUrl(input.appOrigin, incident.id);
	const setupName = oneLine(setup.name);
	const runName = oneLine(run.name);
	const said: Description = opts.what
		? { what: oneLine(opts.what), details: [] }
		: describeIncident({ kind: incident.kind, key: incident.key, evidence: opts.evidence, setupName, runName });
	const version = typeof opts.evidence.version === 'number' ? opts.evidence.version : undefined;

	const group = input.group ?? [];
	const more = group.length > 1 ? ` and ${group.length - 1} related` : '';
	const subject = `[Phasewarden] ${opts.subjectTag}: ${kind}${more} on ${setupName}, run ${runName}`;

	const facts: [string, string][] = [
		['Setup', setupName],
		['Run', runName],
		['Incident', `${kind}, ${incident.severity}`],
		...opts.when.map((w): [string, string] => [w.label, `${w.iso} (${w.human})`])
	];
	const text = [
		opts.headline,
		'',
		...alignRows(facts, ''),
		'',
		...descriptionText(said, version),
		...groupText(group, input.appOrigin),
		'',
		`Open the incident: ${link}`,
		...(input.acknowledgeUrl ? [`Acknowledge: ${input.acknowledgeUrl}`] : []),
		'',
		'--',
		MONITOR_CAUTION,
		''
	].join('\n');

	const html = page(
		subject,
		[
			`<h1 style="font-size:18px;margin:0 0 10px">${escapeHtml(opts.headline)}</h1>`,
			`<table style="border-collapse:collapse">${facts
				.map(([k, v]) => `<tr><th style="${cell};font-weight:600">${escapeHtml(k)}</th><td style="${cell}">${escapeHtml(v)}</td></tr>`)
				.join('')}</table>`,
			descriptionHtml(said, version),
			groupHtml(group, input.appOrigin),
			`<p style="margin:18px 0"><a href="${escapeHtml(link)}">Open the incident</a> <span style="color:#5a6573">${escapeHtml(link)}</span></p>`,
			input.acknowledgeUrl
				? `<p style="margin:0 0 18px"><a href="${escapeHtml(input.acknowledgeUrl)}">Acknowledge</a> <span style="color:#5a6573">(one tap, works once)</span></p>`
				: '',
			`<p style="margin:18px 0 0;font-size:12px;color:#5a6573">${escapeHtml(MONITOR_CAUTION)}</p>`
		].join('')
	);
	return { subject, text, html };
}

const section = (label: string, value: Date | string | number, what: string): Section => {
	const d = toDate(value, what);
	return { label, iso: d.toISOString(), human: humanUtc(d) };
};

export function renderIncidentEmail(input: IncidentEmailInput): RenderedEmail {
	const { incident } = input;
	const severity = incident.severity.charAt(0).toUpperCase() + incident.severity.slice(1);
	return compose(input, {
		subjectTag: severity,
		headline: `${kindLabel(incident.kind)} (${incident.severity}) on ${oneLine(input.setup.name)}`,
		when: [section('Opened', incident.openedAt, 'incident.openedAt')],
		evidence: incident.evidence
	});
}

/** The notice that the detector no longer sees the condition; the incident resolved itself. */
export function renderIncidentClearedEmail(input: ClearedEmailInput): RenderedEmail {
	return compose(input, {
		subjectTag: 'Cleared',
		headline: `${kindLabel(input.incident.kind)} cleared on ${oneLine(input.setup.name)}`,
		when: [section('Opened', input.incident.openedAt, 'incident.openedAt'), section('Cleared', input.cleared.at, 'cleared.at')],
		evidence: input.cleared.evidence ?? input.incident.evidence,
		// Without the clearing's evidence the opening's would tell the wrong story: the summary says it.
		...(input.cleared.evidence ? {} : { what: input.cleared.summary })
	});
}
