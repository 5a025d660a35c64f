import type { User } from '$lib/server/db';
import { isRole, type Role } from './roles';

/** What `locals.user` carries: never the password hash or lock state. */
export interface SessionUser {
	id: string;
	name: string | null;
	email: string;
	role: Role;
}

/** Accepts a model instance or a plain row (its role is checked here either way). */
export function toSessionUser(u: Pick<User, 'id' | 'name' | 'email'> & { role: string }): SessionUser {
	if (!isRole(u.role)) throw new Error(`user ${u.id} has an unknown role '${u.role}'`);
	return { id: u.id, name: u.name, email: u.email, role: u.role };
}

/** Addresses are compared lower-cased and trimmed, as the users table stores them. */
export function normaliseEmail(email: string): string {
	return email.normalize('NFKC').trim().toLowerCase();
}
