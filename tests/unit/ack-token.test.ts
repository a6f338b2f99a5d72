import { describe, expect, it } from 'vitest';
import { signAckToken, verifyAckToken } from '../../src/lib/alerting/ack-token';

const claims = { deliveryId: 'd-1', incidentId: 'i-1', userId: 'u-1', expiresAt_s: 2_000_000_000 };
const before = (claims.expiresAt_s - 60) * 1000;

describe('one-tap acknowledge tokens', () => {
	it('verifies a token it signed and gives back its claims', () => {
		const v = verifyAckToken('s3cret', signAckToken('s3cret', claims), before);
		expect(v).toEqual({ ok: true, claims });
	});

	it('refuses a token signed with another secret', () => {
		const v = verifyAckToken('other', signAckToken('s3cret', claims), before);
		expect(v.ok === false && v.reason).toBe('bad-signature');
	});

	it('refuses a token whose claims were changed (another incident)', () => {
		const token = signAckToken('s3cret', claims);
		const forged = signAckToken('s3cret', { ...claims, incidentId: 'i-2' }).split('.')[0] + '.' + token.split('.')[1];
		const v = verifyAckToken('s3cret', forged, before);
		expect(v.ok === false && v.reason).toBe('bad-signature');
	});

	it('refuses at and after the expiry second, accepts just before it', () => {
		const token = signAckToken('s3cret', claims);
		expect(verifyAckToken('s3cret', token, claims.expiresAt_s * 1000 - 1).ok).toBe(true);
		const v = verifyAckToken('s3cret', token, claims.expiresAt_s * 1000);
		expect(v.ok === false && v.reason).toBe('expired');
	});

	it('calls garbage malformed', () => {
		for (const t of ['', 'abc', 'a.b.c', '.x']) {
			const v = verifyAckToken('s3cret', t, before);
			expect(v.ok).toBe(false);
		}
		const v = verifyAckToken('s3cret', 'abc', before);
		expect(v.ok === false && v.reason).toBe('malformed');
	});
});
