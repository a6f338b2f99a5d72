// The signed-in person as pages read it from the root layout's data (`data.user`).
import { hasRole, type Role } from '$lib/roles';

export interface PageUser {
	id: string;
	email: string;
	name: string;
	role: Role;
}

export function userOf(data: object): PageUser | null {
	return ((data as { user?: PageUser | null }).user ?? null) as PageUser | null;
}

export function canOperate(data: object): boolean {
	return hasRole(userOf(data)?.role, 'operator');
}
