// Roles as the product defines them: observers watch, operators act, admins also manage people.
export const ROLES = ['admin', 'operator', 'observer'] as const;
export type Role = (typeof ROLES)[number];

const RANK: Record<Role, number> = { observer: 0, operator: 1, admin: 2 };

/** True when `role` carries at least the rights of `needed` (an admin is also an operator). */
export function hasRole(role: Role | null | undefined, needed: Role): boolean {
	if (!role) return false;
	return RANK[role] >= RANK[needed];
}

export function isRole(value: unknown): value is Role {
	return typeof value === 'string' && (ROLES as readonly string[]).includes(value);
}
