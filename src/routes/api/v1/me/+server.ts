import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import { CAPABILITIES, can, ROLE_LABELS, type Capability } from '$lib/server/auth/roles';
import { readJson } from '$lib/server/auth/context';
import * as people from '$lib/server/people';
import { ProfilePatch, issuesToDetails } from '$lib/server/people/schemas';
import { apiError } from '$lib/server/http';
import type { RequestHandler } from './$types';

function describe(p: people.PersonDto, via: 'token' | 'session') {
	return {
		id: p.id,
		name: p.name,
		email: p.email,
		role: p.role,
		roleLabel: ROLE_LABELS[p.role],
		capabilities: (Object.keys(CAPABILITIES) as Capability[]).filter((c) => can(p.role, c)),
		unitPreference: p.unitPreference,
		lastSignInAt: p.lastSignInAt,
		authenticatedBy: via
	};
}

/** Who am I: the person behind the session or token, with role and capabilities. */
export const GET: RequestHandler = async ({ locals, request }) => {
	const denied = denyApi(locals, 'ownAccount');
	if (denied) return denied;
	const person = await people.getPerson(locals.user!.id);
	if (!person) return apiError(401, 'unauthenticated', 'Your account no longer exists.');
	return json({ user: describe(person, request.headers.has('authorization') ? 'token' : 'session') });
};

/** Change your own name or unit preference. */
export const PATCH: RequestHandler = async ({ locals, request }) => {
	const denied = denyApi(locals, 'ownAccount');
	if (denied) return denied;
	const parsed = ProfilePatch.safeParse(await readJson(request));
	if (!parsed.success) return apiError(400, 'invalid', 'The profile change is not valid.', issuesToDetails(parsed.error));
	const person = await people.updateOwnProfile(locals.user!.id, parsed.data);
	return json({ user: describe(person, request.headers.has('authorization') ? 'token' : 'session') });
};
