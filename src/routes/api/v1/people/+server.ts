import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import { actionContext, readJson } from '$lib/server/auth/context';
import * as people from '$lib/server/people';
import { InviteInput, issuesToDetails } from '$lib/server/people/schemas';
import { apiError } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** Everyone with an account or an open invitation, with state and last sign-in. */
export const GET: RequestHandler = async ({ locals }) => {
	const denied = denyApi(locals, 'administer');
	if (denied) return denied;
	return json({ people: await people.listPeople() });
};

/** Invite someone by e-mail; the invitation mail is sent (or queued) before this answers. */
export const POST: RequestHandler = async (event) => {
	const denied = denyApi(event.locals, 'administer');
	if (denied) return denied;
	const parsed = InviteInput.safeParse(await readJson(event.request));
	if (!parsed.success) return apiError(400, 'invalid', 'The invitation is not valid.', issuesToDetails(parsed.error));
	try {
		const { person, mail } = await people.invite(actionContext(event), parsed.data);
		const sent = await mail;
		return json({ person, mail: { status: sent.status } }, { status: 201 });
	} catch (err) {
		if (err instanceof people.PeopleError) {
			return apiError(err.code === 'conflict' ? 409 : 400, err.code, err.message, err.field ? [{ field: err.field, message: err.message }] : []);
		}
		throw err;
	}
};
