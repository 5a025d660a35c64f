import { error, redirect } from '@sveltejs/kit';
import { apiError } from '../http';
import { can, type Capability } from './roles';

type Locals = App.Locals;

/**
 * Page guard for loads and form actions: anonymous → sign-in, signed in
 * without the capability → 403 on our error page. Call it outside any `try`.
 */
export function requireCapability(locals: Locals, capability: Capability, next = '/'): NonNullable<Locals['user']> {
	if (!locals.user) redirect(303, `/signin?next=${encodeURIComponent(next)}`);
	if (!can(locals.user.role, capability)) {
		error(403, { message: 'Your role does not allow this.', code: 'forbidden' });
	}
	return locals.user;
}

/**
 * API guard for `+server.ts`: returns a JSON error response to send (401 or
 * 403), or null when the request may go on.
 */
export function denyApi(locals: Locals, capability: Capability): Response | null {
	if (!locals.user) return apiError(401, 'unauthenticated', 'Sign in or send an API token (Authorization: Bearer <token>).');
	if (!can(locals.user.role, capability)) return apiError(403, 'forbidden', `Your role does not allow this (needs '${capability}').`);
	return null;
}
