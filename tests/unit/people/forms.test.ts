// The people forms' shared rules: who may invite whom (the role ladder in src/lib/roles.ts) and the
// password and label checks both the browser and the server apply.
import { describe, expect, it } from 'vitest';
import { acceptInviteSchema, inviteSchema, mayInvite, newApiTokenSchema, resetPasswordSchema } from '../../../src/lib/people/forms';
import { ROLES } from '../../../src/lib/roles';

describe('mayInvite', () => {
	it('lets admins invite every role, operators up to operator, observers nobody', () => {
		const allowed = ROLES.flatMap((inviter) =>
			ROLES.filter((invitee) => mayInvite(inviter, invitee)).map((invitee) => `${inviter}→${invitee}`)
		);
		expect(allowed.sort()).toEqual(['admin→admin', 'admin→observer', 'admin→operator', 'operator→observer', 'operator→operator']);
	});
});

describe('form schemas', () => {
	it('normalises an invited address to lower case and names a bad role', () => {
		expect(inviteSchema.parse({ email: 'Ada@Lab.Test', role: 'operator' }).email).toBe('ada@lab.test');
		const bad = inviteSchema.safeParse({ email: 'ada@lab.test', role: 'owner' });
		expect(bad.success).toBe(false);
		expect(bad.error?.issues[0].message).toMatch(/role must be/);
	});

	it('refuses a short password and two passwords that differ, naming the field', () => {
		const short = acceptInviteSchema.safeParse({ name: 'Ada', password: 'short', confirm: 'short' });
		expect(short.error?.issues[0].path).toEqual(['password']);
		const differ = resetPasswordSchema.safeParse({ password: 'long-enough-1', confirm: 'long-enough-2' });
		expect(differ.error?.issues[0]).toMatchObject({ path: ['confirm'], message: 'the two passwords differ' });
		expect(resetPasswordSchema.safeParse({ password: 'long-enough-1', confirm: 'long-enough-1' }).success).toBe(true);
	});

	it('needs a label for a token', () => {
		expect(newApiTokenSchema.safeParse({ label: '   ' }).error?.issues[0].message).toMatch(/label is required/);
	});
});
