// better-auth's access control for our three roles: only admins manage users.
import { createAccessControl } from 'better-auth/plugins/access';
import { adminAc, defaultStatements } from 'better-auth/plugins/admin/access';

export const ac = createAccessControl(defaultStatements);

export const accessRoles = {
	admin: adminAc,
	operator: ac.newRole({ user: [], session: [] }),
	observer: ac.newRole({ user: [], session: [] })
};
