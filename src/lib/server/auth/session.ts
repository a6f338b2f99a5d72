import type { Role } from '$lib/roles';

/** The signed-in person as every server route sees it (from better-auth's session). */
export interface SessionUser {
	id: string;
	email: string;
	name: string;
	role: Role;
}
