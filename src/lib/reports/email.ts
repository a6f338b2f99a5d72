// The morning report as an e-mail: a plain-text part that reads on its own, and an HTML part
// with the same content plus a sparkline per run. Plain sentences, no field names.
import { formatDuration, formatRate, kindLabel } from '../ui/format';
import { formatInZone, pText, rateSentence } from '../summary/words';
import type { MorningReport, ReportRun } from './report';
import { sparkSvg } from './sparkline';

const pct = (x: number | null) => (x === null ? 'no data' : `${(100 * x).toFixed(1)} %`);

function lockedWords(r: ReportRun): string {
	const t = r.summary.timeLocked;
	if (t.fraction_min === null) return 'no data';
	return t.undecided_buckets === 0 ? pct(t.fraction_min) : `between ${pct(t.fraction_min)} and ${pct(t.fraction_max)}`;
}

export function reportSubject(r: MorningReport): string {
	const open = r.incidents.filter((i) => i.state !== 'resolved').length;
	const span = `${formatInZone(r.since_ms, r.timeZone)} to ${formatInZone(r.until_ms, r.timeZone)}`;
	return `Morning report: ${r.runs.length} run${r.runs.length === 1 ? '' : 's'}, ${r.incidents.length} incident${r.incidents.length === 1 ? '' : 's'}${open ? ` (${open} still open)` : ''} — ${span}`;
}

function incidentWords(i: MorningReport['incidents'][number], tz: string): string {
	const ack = i.acknowledgedBy ? `acknowledged by ${i.acknowledgedBy} after ${formatDuration(i.toAcknowledge_s)}` : 'not acknowledged';
	const res =
		i.toResolve_s !== null
			? `, resolved by ${i.resolvedBy} after ${formatDuration(i.toResolve_s)}`
			: i.state === 'resolved'
				? ', resolved'
				: ', still open';
	return `${kindLabel(i.kind)} (${i.severity}) on ${i.runName} at ${formatInZone(i.opened_ms, tz)}: ${i.summary}. ${ack[0].toUpperCase()}${ack.slice(1)}${res}.`;
}

export function reportText(r: MorningReport, origin: string): string {
	const tz = r.timeZone;
	const lines: string[] = [];
	lines.push(`What happened from ${formatInZone(r.since_ms, tz)} to ${formatInZone(r.until_ms, tz)} (${tz})`);
	lines.push(`on ${r.setups.map((s) => s.name).join(', ') || 'no setups'}.`, '');
	if (r.runs.length === 0) lines.push('No run recorded data in this span.', '');
	for (const run of r.runs) {
		const s = run.summary;
		lines.push(`== ${run.name} (${run.setupName}, ${run.status === 'open' ? 'running' : 'ended'})`);
		lines.push(
			`Data: ${formatDuration(s.exposure.data_s)} in ${s.exposure.frames} frames; locked ${lockedWords(run)} of the time (lock at or above ${s.timeLocked.threshold}).`
		);
		lines.push(rateSentence('switching', s.switching, formatRate));
		lines.push(rateSentence('escape', s.escape, formatRate));
		if (s.occupancy.test)
			lines.push(
				`Equal filling of the ${s.states} states: ${pText(s.occupancy.test.pValue)}${s.occupancy.test.pValue < 0.05 ? ', they do not fill equally' : ''}.`
			);
		lines.push(
			s.lost.seconds > 0 ? `Lost data: ${formatDuration(s.lost.seconds)} (${s.lost.frames} frames never arrived).` : 'No data lost.'
		);
		lines.push(`Incidents: ${s.incidents.length}.`);
		lines.push(`Timeline: ${origin}${run.timelinePath}`, '');
	}
	if (r.incidents.length) {
		lines.push('== Incidents');
		for (const i of r.incidents) lines.push(`- ${incidentWords(i, tz)} ${origin}/incidents/${i.id}`);
		lines.push('');
	}
	if (r.annotations.length) {
		lines.push('== Annotations');
		for (const a of r.annotations)
			lines.push(`- ${formatInZone(a.at_ms, tz)} on ${a.runName}: ${a.text}${a.author ? ` (${a.author})` : ''}`);
		lines.push('');
	}
	return lines.join('\n');
}

const esc = (s: string) => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');

export function reportHtml(r: MorningReport, origin: string): string {
	const tz = r.timeZone;
	const runs = r.runs
		.map((run) => {
			const s = run.summary;
			const spark = sparkSvg(
				run.spark.points.map((p) => p.switchRate_per_s),
				run.spark.points.map((p) => p.expectedRate_per_s)
			);
			return `<h2 style="font-size:16px;margin:18px 0 4px">${esc(run.name)} <span style="color:#4f6378;font-weight:normal">${esc(run.setupName)}</span></h2>
<p style="margin:2px 0">${spark}<br><span style="color:#4f6378;font-size:12px">Switching rate per ${esc(formatDuration(run.spark.resolution_s))} (solid) against the prediction (dashed)</span></p>
<p style="margin:2px 0">Data: ${esc(formatDuration(s.exposure.data_s))} in ${s.exposure.frames} frames; locked ${esc(lockedWords(run))} of the time.</p>
<p style="margin:2px 0">${esc(rateSentence('switching', s.switching, formatRate))}<br>${esc(rateSentence('escape', s.escape, formatRate))}</p>
<p style="margin:2px 0">${s.lost.seconds > 0 ? `Lost data: ${esc(formatDuration(s.lost.seconds))} (${s.lost.frames} frames).` : 'No data lost.'} Incidents: ${s.incidents.length}.</p>
<p style="margin:2px 0"><a href="${esc(origin + run.timelinePath)}">Open the timeline of this night</a></p>`;
		})
		.join('\n');
	const incidents = r.incidents.length
		? `<h2 style="font-size:16px">Incidents</h2><ul>${r.incidents.map((i) => `<li><a href="${esc(`${origin}/incidents/${i.id}`)}">${esc(incidentWords(i, tz))}</a></li>`).join('')}</ul>`
		: '';
	const notes = r.annotations.length
		? `<h2 style="font-size:16px">Annotations</h2><ul>${r.annotations.map((a) => `<li>${esc(formatInZone(a.at_ms, tz))} on ${esc(a.runName)}: ${esc(a.text)}</li>`).join('')}</ul>`
		: '';
	return `<!doctype html><html><body style="font-family:sans-serif;color:#111821;max-width:640px">
<p>What happened from ${esc(formatInZone(r.since_ms, tz))} to ${esc(formatInZone(r.until_ms, tz))} (${esc(tz)}) on ${esc(r.setups.map((s) => s.name).join(', ') || 'no setups')}.</p>
${r.runs.length ? runs : '<p>No run recorded data in this span.</p>'}
${incidents}
${notes}
</body></html>`;
}
