import { redirect, type Handle, type HandleServerError } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { randomUUID } from 'node:crypto';
import { apiError } from '$lib/server/http';

/** Paths anyone may reach without signing in. */
const PUBLIC_PATHS = [/^\/signin(\/|$)/, /^\/auth\//, /^\/api\/v1\/health$/, /^\/_app\//, /^\/favicon/];

const requestId: Handle = async ({ event, resolve }) => {
	event.locals.requestId = event.request.headers.get('x-request-id')?.slice(0, 64) || randomUUID();
	event.locals.user = null;
	const response = await resolve(event);
	response.headers.set('x-request-id', event.locals.requestId);
	return response;
};

/** First line of defence; every load, action and endpoint checks its capability again. */
const gate: Handle = async ({ event, resolve }) => {
	const path = event.url.pathname;
	if (!event.locals.user && !PUBLIC_PATHS.some((p) => p.test(path))) {
		if (path.startsWith('/api/')) {
			return apiError(401, 'unauthenticated', 'Sign in or send an API token (Authorization: Bearer <token>).');
		}
		redirect(303, `/signin?next=${encodeURIComponent(path + event.url.search)}`);
	}
	return resolve(event);
};

export const handle: Handle = sequence(requestId, gate);

export const handleError: HandleServerError = ({ error, event, status, message }) => {
	if (status !== 404) console.error(`[${event.locals.requestId}] ${status} ${event.url.pathname}:`, error);
	return { message: status === 404 ? 'Page not found.' : message, requestId: event.locals.requestId };
};
