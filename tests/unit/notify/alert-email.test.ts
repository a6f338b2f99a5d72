// The alert e-mail must name the setup, run, kind and time, tell the evidence against its threshold
// in sentences without machine field names, and link to the incident. Times are checked against
// the Date API itself.
import { describe, expect, it } from 'vitest';
import {
	MONITOR_CAUTION,
	humanUtc,
	renderIncidentClearedEmail,
	renderIncidentEmail,
	type IncidentEmailInput
} from '../../../src/lib/server/notify/alert-email';
import { DetectorEngine } from '../../../src/lib/detect';
import { frame, K } from '../detect/frames';

/** A real lock_lost opening, straight from the engine, so the e-mail is tested on true evidence. */
function lockLostOpen() {
	const engine = new DetectorEngine({ lock_lost: { version: 4 } }, { states: K });
	const events = [0.42, 0.38, 0.31, 0.27, 0.22].flatMap((lock, i) => engine.onFrame(frame(1040 + i, lock)));
	const open = events.find((e) => e.type === 'open');
	if (!open || open.type !== 'open') throw new Error('engine did not open lock_lost');
	return open;
}

const openedAt = new Date(Date.UTC(2025, 5, 15, 3, 12, 45)); // 15 June 2025, a Sunday
const open = lockLostOpen();
const input: IncidentEmailInput = {
	incident: { id: 'inc_7Qx', kind: 'lock_lost', severity: 'critical', summary: open.summary, openedAt, evidence: open.evidence },
	run: { id: 'run_1', name: 'Cooldown 14 · period tripling sweep' },
	setup: { id: 'setup_1', name: 'Fridge Aster (Kessler lab)' },
	appOrigin: 'https://warden.kessler-lab.example/'
};

describe('renderIncidentEmail', () => {
	const mail = renderIncidentEmail(input);

	it('names setup, run, kind and severity in the subject', () => {
		expect(mail.subject).toContain('Fridge Aster (Kessler lab)');
		expect(mail.subject).toContain('Cooldown 14 · period tripling sweep');
		expect(mail.subject).toContain('Lock lost');
		expect(mail.subject).toContain('Critical');
	});

	it('gives the time in ISO UTC and in words', () => {
		for (const body of [mail.text, mail.html]) {
			expect(body).toContain('2025-06-15T03:12:45.000Z');
			expect(body).toContain('Sunday 15 June 2025, 03:12:45 UTC');
			expect(body).not.toContain('lock_lost');
		}
	});

	it('writes the day and month out by the Date API, whatever the server time zone', () => {
		const d = new Date(Date.UTC(2024, 1, 29, 23, 59, 59)); // leap day 2024 was a Thursday
		expect(d.getUTCDay()).toBe(4);
		expect(humanUtc(d)).toBe('Thursday 29 February 2024, 23:59:59 UTC');
	});

	it('tells the values against the threshold in sentences, in text and html, without field names', () => {
		const first = new Date(frame(1040, 0).t).toISOString().slice(11, 19);
		const last = new Date(frame(1044, 0).t).toISOString().slice(11, 19);
		for (const body of [mail.text.replace(/\s+/g, ' '), mail.html]) {
			expect(body).toContain(
				'Phase lock on Fridge Aster (Kessler lab), run Cooldown 14 · period tripling sweep fell below 0.5 for 5 windows in a row'
			);
			expect(body).toContain(`since ${first} UTC`);
			expect(body).toContain(`0.22 at ${last} UTC`);
			expect(body).toContain('Detector rule version 4');
		}
		const fromEvidence = mail.text.slice(mail.text.indexOf('What happened'), mail.text.indexOf('Open the incident'));
		expect(fromEvidence.match(/\b[A-Za-z]+_[A-Za-z0-9_]+\b|\b[a-z]+[A-Z][A-Za-z]*\b/g) ?? []).toEqual([]);
		expect(mail.html).toContain('<li');
	});

	it('wraps the plain text at 78 columns', () => {
		const body = mail.text.slice(mail.text.indexOf('What happened'), mail.text.indexOf('Open the incident'));
		for (const line of body.split('\n')) expect(line.length).toBeLessThanOrEqual(78);
	});

	it('links to the incident and ends with the caution', () => {
		const link = 'https://warden.kessler-lab.example/incidents/inc_7Qx';
		expect(mail.text).toContain(link);
		expect(mail.html).toContain(`href="${link}"`);
		expect(mail.text.trimEnd().endsWith(MONITOR_CAUTION)).toBe(true);
		expect(mail.html).toContain('not a safety interlock');
	});

	it('escapes names in the html', () => {
		const hostile = renderIncidentEmail({ ...input, setup: { id: 's', name: 'Fridge <script>alert(1)</script>' } });
		expect(hostile.html).not.toContain('<script>');
		expect(hostile.html).toContain('&lt;script&gt;');
	});

	it('keeps the subject on one line', () => {
		const m = renderIncidentEmail({ ...input, run: { id: 'r', name: 'two\r\nlines' } });
		expect(m.subject).not.toMatch(/[\r\n]/);
	});

	it('refuses an invalid opening time, naming it', () => {
		expect(() => renderIncidentEmail({ ...input, incident: { ...input.incident, openedAt: 'yesterday' } })).toThrow(/incident\.openedAt/);
	});

	it('tells agent_silent evidence with its durations and times', () => {
		const engine = new DetectorEngine({}, { states: K });
		engine.onFrame(frame(9, 0.9), Date.UTC(2025, 5, 15, 2, 0, 0));
		const [silent] = engine.onClock(Date.UTC(2025, 5, 15, 2, 1, 30));
		if (silent.type !== 'open') throw new Error('expected an opening');
		const m = renderIncidentEmail({
			...input,
			incident: { ...input.incident, kind: 'agent_silent', severity: 'warning', summary: silent.summary, evidence: silent.evidence }
		});
		expect(m.subject).toContain('Agent silent');
		const text = m.text.replace(/\s+/g, ' ');
		expect(text).toContain('The limit is 1 min 00 s without a frame');
		expect(text).toContain('for 1 min 30 s');
		expect(text).toContain('since 02:00:00 UTC on 15 June 2025');
	});
});

describe('renderIncidentClearedEmail', () => {
	it('says the condition cleared, when, and still links to the incident', () => {
		const clearedAt = new Date(Date.UTC(2025, 5, 15, 3, 40, 0));
		const m = renderIncidentClearedEmail({
			...input,
			cleared: { at: clearedAt, summary: 'Phase lock back at or above 0.70 for 5 consecutive windows' }
		});
		expect(m.subject).toContain('Cleared');
		expect(m.subject).toContain('Lock lost');
		expect(m.text).toContain(clearedAt.toISOString());
		expect(m.text.replace(/\s+/g, ' ')).toContain('Phase lock back at or above 0.70');
		expect(m.text).toContain('https://warden.kessler-lab.example/incidents/inc_7Qx');
		expect(m.text).toContain(MONITOR_CAUTION);
	});
});
