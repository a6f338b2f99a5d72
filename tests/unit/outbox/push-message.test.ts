// The push payload: short enough for a lock screen, one line, the link, and Acknowledge only on alerts.
import { describe, expect, it } from 'vitest';
import type { IncidentContext } from '../../../src/lib/server/outbox/incident-context';
import { pushMessage } from '../../../src/lib/server/outbox/push-message';
import { configureAckLinks } from '../../../src/lib/server/alerting/ack-links';
import { verifyAckToken } from '../../../src/lib/alerting/ack-token';
import type { OutboxRow } from '../../../src/lib/server/outbox/sender';

const at = new Date(Date.UTC(2026, 0, 5, 3, 0, 0));
const row = (kind: string, payload: Record<string, unknown> = {}): OutboxRow => ({
	id: '5f0c1d3e-0000-4000-8000-000000000001',
	incidentId: 'inc-1',
	kind,
	channel: 'push',
	recipient: 'sub-1',
	payload,
	status: 'sending',
	attempts: 1,
	nextAttemptAt: at,
	leaseUntil: null,
	expiresAt: at,
	lastError: null,
	providerRef: null,
	sentAt: null,
	createdAt: at,
	dedupeKey: 'k'
});
const ctx = {
	incident: { id: 'inc-1', kind: 'lock_lost', severity: 'critical', summary: 'Lock quality fell below 0.5\nfor 5 windows '.repeat(10) },
	run: { id: 'run-1', name: 'cooldown 14' },
	setup: { id: 'setup-1', name: 'Bramble fridge · tripler with a rather long name for a phone' }
} as unknown as IncidentContext;

configureAckLinks('unit-test-secret');

describe('pushMessage', () => {
	it('gives an alert a short title, one line, the link and an Acknowledge action', () => {
		const m = pushMessage(row('alert', { userId: 'user-7' }), ctx, 'https://pw.lab.example/');
		expect(m.title.startsWith('Critical: Lock lost · Bramble')).toBe(true);
		expect(m.title.length).toBeLessThanOrEqual(60);
		expect(m.body).not.toMatch(/\n/);
		expect(m.body.length).toBeLessThanOrEqual(140);
		expect(m.url).toBe('https://pw.lab.example/incidents/inc-1');
		expect(m.actions).toEqual([
			{ action: 'acknowledge', title: 'Acknowledge', url: expect.stringMatching(/^https:\/\/pw\.lab\.example\/ack\/[\w-]+\.[\w-]+$/) }
		]);
		// The action is a one-tap link for the device's owner and this delivery, 24 h from its creation.
		const verdict = verifyAckToken('unit-test-secret', m.actions[0].url.split('/ack/')[1], at.getTime());
		expect(verdict).toEqual({
			ok: true,
			claims: { deliveryId: row('alert').id, incidentId: 'inc-1', userId: 'user-7', expiresAt_s: at.getTime() / 1000 + 24 * 3600 }
		});
		// Under the roughly 4 kB push services accept once encrypted.
		expect(JSON.stringify(m).length).toBeLessThan(1000);
	});

	it('gives a clear notice the same tag (it replaces the alert) and no action', () => {
		const alert = pushMessage(row('alert'), ctx, 'https://pw.lab.example');
		const clear = pushMessage(row('clear', { clearedSummary: 'Lock is back.' }), ctx, 'https://pw.lab.example');
		expect(clear.tag).toBe(alert.tag);
		expect(clear.title).toMatch(/^Cleared: Lock lost/);
		expect(clear.body).toBe('Lock is back.');
		expect(clear.actions).toEqual([]);
	});

	it('leads a group’s alert with its most severe incident, names the others, and acknowledges the paged one', () => {
		// The burst opened first and heads the group (the delivery belongs to it); the lost lock came later.
		const head = {
			...ctx,
			incident: { id: 'inc-1', kind: 'switching_burst', severity: 'warning', summary: '25 switches in 1 s' }
		} as unknown as IncidentContext;
		const group = [
			{ id: 'inc-1', kind: 'switching_burst', severity: 'warning', summary: '25 switches in 1 s', openedAt: at, head: true },
			{
				id: 'inc-2',
				kind: 'lock_lost',
				severity: 'critical',
				summary: 'Lock quality fell below 0.5',
				openedAt: new Date(at.getTime() + 4000)
			},
			{
				id: 'inc-3',
				kind: 'occupancy_imbalance',
				severity: 'warning',
				summary: 'state 2 holds 61 %',
				openedAt: new Date(at.getTime() + 2000)
			}
		];
		const m = pushMessage(row('alert', { userId: 'user-7' }), head, 'https://pw.lab.example', group);
		expect(m.title.startsWith('Critical: Lock lost · Bramble')).toBe(true);
		expect(m.body).toBe('Lock quality fell below 0.5 — and 2 related: switching burst, occupancy imbalance');
		expect(m.url).toBe('https://pw.lab.example/incidents/inc-2');
		expect(m.tag).toBe('inc-1');
		const verdict = verifyAckToken('unit-test-secret', m.actions[0].url.split('/ack/')[1], at.getTime());
		expect(verdict.ok && verdict.claims.incidentId).toBe('inc-1');
	});
});
