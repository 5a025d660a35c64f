import { fail } from '@sveltejs/kit';
import { requireCapability } from '$lib/server/auth/guard';
import { ROLES, ROLE_LABELS } from '$lib/server/auth/roles';
import { actionContext } from '$lib/server/auth/context';
import * as people from '$lib/server/people';
import { InviteInput, PersonPatch } from '$lib/server/people/schemas';
import type { Actions, PageServerLoad } from './$types';

export const load = (async ({ locals }) => {
	requireCapability(locals, 'administer', '/admin/people');
	return {
		people: await people.listPeople(),
		roles: ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] })),
		me: locals.user!.id
	};
}) satisfies PageServerLoad;

function problem(err: unknown) {
	if (err instanceof people.PeopleError) return fail(err.code === 'not_found' ? 404 : 400, { ok: false, message: err.message });
	throw err;
}

export const actions = {
	invite: async (event) => {
		requireCapability(event.locals, 'administer', '/admin/people');
		const form = Object.fromEntries(await event.request.formData());
		const parsed = InviteInput.safeParse({ ...form, name: form.name || null });
		if (!parsed.success) return fail(400, { ok: false, message: parsed.error.issues[0].message, field: String(parsed.error.issues[0].path[0] ?? '') });
		try {
			const { person, mail } = await people.invite(actionContext(event), parsed.data);
			const sent = await mail;
			return {
				ok: true,
				message:
					sent.status === 'sent'
						? `Invitation sent to ${person.email}.`
						: `Invitation for ${person.email} is queued; the mail server did not take it yet (${sent.error ?? 'no answer'}).`
			};
		} catch (err) {
			return problem(err);
		}
	},
	update: async (event) => {
		requireCapability(event.locals, 'administer', '/admin/people');
		const form = await event.request.formData();
		const id = String(form.get('id') ?? '');
		const change = {
			...(form.get('role') ? { role: String(form.get('role')) } : {}),
			...(form.get('active') ? { active: form.get('active') === 'true' } : {}),
			...(form.get('unlock') ? { unlock: true as const } : {})
		};
		const parsed = PersonPatch.safeParse(change);
		if (!parsed.success) return fail(400, { ok: false, message: parsed.error.issues[0].message });
		const ctx = actionContext(event);
		try {
			let person: people.PersonDto | null = null;
			if (parsed.data.role) person = await people.changeRole(ctx, id, parsed.data.role);
			if (parsed.data.active !== undefined) person = await people.setActive(ctx, id, parsed.data.active);
			if (parsed.data.unlock) person = await people.unlock(ctx, id);
			return { ok: true, message: person ? `${person.email}: ${person.roleLabel}, ${person.state}.` : 'Nothing changed.' };
		} catch (err) {
			return problem(err);
		}
	}
} satisfies Actions;
