import { redirect } from '@sveltejs/kit';
import { signOut } from '../../auth';
import * as audit from '$lib/server/audit';
import { clientAddress } from '$lib/server/auth/request';
import type { Actions, PageServerLoad } from './$types';

export const load = (async ({ locals }) => {
	if (!locals.user) redirect(303, '/signin');
	return { name: locals.user.name ?? locals.user.email };
}) satisfies PageServerLoad;

function withEmptyForm(event: Parameters<Actions[string]>[0], fields: Record<string, string>) {
	const headers = new Headers(event.request.headers);
	headers.set('content-type', 'application/x-www-form-urlencoded');
	headers.delete('content-length');
	return { ...event, request: new Request(event.request.url, { method: 'POST', headers, body: new URLSearchParams(fields) }) };
}

export const actions = {
	default: async (event) => {
		const user = event.locals.user;
		if (user) {
			await audit.record({
				actor: user,
				action: 'sign_out',
				entityType: 'user',
				entityId: user.id,
				requestId: event.locals.requestId,
				ip: clientAddress(event)
			});
		}
		// Clears the session cookie and throws the redirect.
		await signOut(withEmptyForm(event, { redirectTo: '/signin?done=signed_out' }));
	}
} satisfies Actions;
