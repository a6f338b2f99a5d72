// The alert e-mail must name the setup, run, kind and time, show the evidence against its threshold
// and link to the incident (issue 2, item 7). Times are checked against the Date API itself.
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
			expect(body).toContain('lock_lost');
		}
	});

	it('writes the day and month out by the Date API, whatever the server time zone', () => {
		const d = new Date(Date.UTC(2024, 1, 29, 23, 59, 59)); // leap day 2024 was a Thursday
		expect(d.getUTCDay()).toBe(4);
		expect(humanUtc(d)).toBe('Thursday 29 February 2024, 23:59:59 UTC');
	});

	it('shows the last values against the threshold, with rule and version, in text and html', () => {
		expect(mail.text).toContain('rule lock_lost, version 4');
		expect(mail.text).toMatch(/Threshold\s+0\.5/);
		expect(mail.text).toMatch(/vs threshold 0\.5/);
		for (const [seq, lock] of [
			[1040, '0.42'],
			[1044, '0.22']
		] as const) {
			const t = new Date(frame(seq, 0).t).toISOString().slice(11, 19);
			expect(mail.text).toMatch(new RegExp(`${seq}\\s+\\S+ ${t} UTC\\s+${lock}\\s+below`));
		}
		expect(mail.html).toContain('<table');
		expect(mail.html).toMatch(/<td[^>]*>1044<\/td><td[^>]*>[^<]+<\/td><td[^>]*>0\.22<\/td><td[^>]*>below<\/td>/);
	});

	it('aligns the text table in columns', () => {
		const rows = mail.text.split('\n').filter((l) => /^\s+10\d\d\s/.test(l));
		expect(rows).toHaveLength(5);
		const lockColumn = rows.map((r) => r.indexOf('0.'));
		expect(new Set(lockColumn).size).toBe(1);
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

	it('renders agent_silent evidence with its durations and times', () => {
		const engine = new DetectorEngine({}, { states: K });
		engine.onFrame(frame(9, 0.9), Date.UTC(2025, 5, 15, 2, 0, 0));
		const [silent] = engine.onClock(Date.UTC(2025, 5, 15, 2, 1, 30));
		if (silent.type !== 'open') throw new Error('expected an opening');
		const m = renderIncidentEmail({
			...input,
			incident: { ...input.incident, kind: 'agent_silent', severity: 'warning', summary: silent.summary, evidence: silent.evidence }
		});
		expect(m.subject).toContain('Agent silent');
		expect(m.text).toMatch(/Silence limit\s+60 s/);
		expect(m.text).toMatch(/Silence\s+90 s/);
		expect(m.text).toMatch(/Last frame received\s+2025-06-15 02:00:00 UTC/);
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
		expect(m.text).toContain('Phase lock back at or above 0.70');
		expect(m.text).toContain('https://warden.kessler-lab.example/incidents/inc_7Qx');
		expect(m.text).toContain(MONITOR_CAUTION);
	});
});
