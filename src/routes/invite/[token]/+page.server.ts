import { fail, redirect } from '@sveltejs/kit';
import * as people from '$lib/server/people';
import { AcceptInvitationInput } from '$lib/server/people/schemas';
import { clientAddress } from '$lib/server/auth/request';
import type { Actions, PageServerLoad } from './$types';

export const load = (async ({ params }) => {
	const check = await people.checkInvitation(params.token);
	if (!check.ok) return { invitation: null, problem: people.invitationProblemMessage(check.reason) };
	return { invitation: check, problem: null };
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const parsed = AcceptInvitationInput.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) {
			const issue = parsed.error.issues[0];
			return fail(400, { field: String(issue.path[0] ?? ''), message: issue.message });
		}
		let email: string;
		try {
			({ email } = await people.acceptInvitation(
				event.params.token,
				{ password: parsed.data.password, name: parsed.data.name },
				{ requestId: event.locals.requestId, ip: clientAddress(event) }
			));
		} catch (err) {
			if (err instanceof people.PeopleError) return fail(400, { field: err.field ?? '', message: err.message });
			throw err;
		}
		redirect(303, `/signin?done=password_set&email=${encodeURIComponent(email)}`);
	}
} satisfies Actions;
