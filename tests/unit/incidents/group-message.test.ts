// Which incident a group's single notification leads with, and how it names the others. The
// expected orders are written out by hand from the rule (severity, then cause before consequence,
// then time), not computed by the module.
import { describe, expect, it } from 'vitest';
import { groupLead, groupSeverity, relatedPhrase, type GroupMember } from '../../../src/lib/incidents/group-message';
import { renderIncidentEmail } from '../../../src/lib/server/notify/alert-email';

const at = (s: number) => new Date(Date.UTC(2026, 2, 18, 12, 0, s));
// The demo's lock loss, in the order its incidents opened: a burst first, the lock a few seconds later.
const burst: GroupMember = {
	id: 'a',
	kind: 'switching_burst',
	severity: 'warning',
	summary: '25 switches in 1 s where 1 was expected',
	openedAt: at(0),
	head: true
};
const occupancy: GroupMember = {
	id: 'b',
	kind: 'occupancy_imbalance',
	severity: 'warning',
	summary: 'state 2 holds 61 %',
	openedAt: at(2)
};
const lock: GroupMember = {
	id: 'c',
	kind: 'lock_lost',
	severity: 'critical',
	summary: 'lock 0.15 below 0.5 for 5 windows',
	openedAt: at(4)
};
const aux: GroupMember = { id: 'd', kind: 'aux_limit', severity: 'critical', summary: 'mxc_mK 35 above 30', openedAt: at(1) };

describe('groupLead', () => {
	it('leads with the most severe incident, a cause before a consequence among equals, then the earliest', () => {
		expect(groupLead([burst, occupancy, lock]).id).toBe('c');
		// aux_limit opened earlier than lock_lost and is as severe, but the lost lock is the cause.
		expect(groupLead([burst, aux, lock]).id).toBe('c');
		expect(groupLead([burst, aux]).id).toBe('d');
		expect(groupLead([occupancy, burst]).id).toBe('a');
		expect(groupSeverity([burst, occupancy])).toBe('warning');
		expect(groupSeverity([burst, lock])).toBe('critical');
	});

	it('refuses an empty group by name', () => {
		expect(() => groupLead([])).toThrow(/at least one incident/);
	});

	it('names the others in words', () => {
		expect(relatedPhrase([burst, occupancy, lock], lock)).toBe('and 2 related: switching burst, occupancy imbalance');
		expect(relatedPhrase([lock], lock)).toBe('');
	});
});

describe('the alert e-mail of a group', () => {
	const input = {
		incident: { id: lock.id, kind: lock.kind, severity: lock.severity, summary: lock.summary, openedAt: lock.openedAt, evidence: {} },
		run: { id: 'r', name: 'T6 overnight' },
		setup: { id: 's', name: 'Fridge Bramble' },
		appOrigin: 'https://pw.lab.example',
		acknowledgeUrl: 'https://pw.lab.example/ack/x'
	};

	it('lists every incident of the group with its severity and opening time, and says how many came with the lead', () => {
		const mail = renderIncidentEmail({ ...input, group: [burst, occupancy, lock] });
		expect(mail.subject).toBe('[Phasewarden] Critical: Lock lost and 2 related on Fridge Bramble, run T6 overnight');
		// The text is wrapped at 78 columns: compare with runs of white space as one space.
		for (const body of [mail.text, mail.html].map((b) => b.replace(/\s+/g, ' '))) {
			expect(body).toContain('In this alert');
			expect(body).toContain('Switching burst, warning, opened 2026-03-18T12:00:00.000Z: 25 switches in 1 s where 1 was expected');
			expect(body).toContain('Occupancy imbalance, warning, opened 2026-03-18T12:00:02.000Z');
			expect(body).toContain('Lock lost, critical, opened 2026-03-18T12:00:04.000Z');
		}
		expect(mail.text).toMatch(/^Acknowledge: https:\/\/pw\.lab\.example\/ack\/x$/m);
	});

	it('has no group section for an incident that opened alone', () => {
		const mail = renderIncidentEmail({ ...input, group: [] });
		expect(mail.text).not.toContain('In this alert');
		expect(mail.subject).toBe('[Phasewarden] Critical: Lock lost on Fridge Bramble, run T6 overnight');
	});
});
