import { fail } from '@sveltejs/kit';
import { requireCapability } from '$lib/server/auth/guard';
import { actionContext } from '$lib/server/auth/context';
import * as tokens from '$lib/server/auth/tokens';
import * as people from '$lib/server/people';
import { ProfilePatch, TokenInput } from '$lib/server/people/schemas';
import type { Actions, PageServerLoad } from './$types';

export const load = (async ({ locals }) => {
	const user = requireCapability(locals, 'ownAccount', '/account');
	return { person: await people.getPerson(user.id), tokens: await tokens.listTokens(user.id) };
}) satisfies PageServerLoad;

export const actions = {
	profile: async (event) => {
		const user = requireCapability(event.locals, 'ownAccount', '/account');
		const form = Object.fromEntries(await event.request.formData());
		const parsed = ProfilePatch.safeParse({ name: form.name ?? undefined, unitPreference: form.unitPreference || undefined });
		if (!parsed.success) return fail(400, { ok: false, message: parsed.error.issues[0].message });
		await people.updateOwnProfile(user.id, parsed.data);
		return { ok: true, message: 'Saved.' };
	},
	createToken: async (event) => {
		const user = requireCapability(event.locals, 'ownAccount', '/account');
		const form = Object.fromEntries(await event.request.formData());
		// Own tokens only here; tokens for others are on the admin page.
		const parsed = TokenInput.safeParse({ name: form.name, expiresAt: form.expiresAt });
		if (!parsed.success) return fail(400, { ok: false, message: parsed.error.issues[0].message });
		try {
			const { token, info } = await tokens.createToken(actionContext(event), {
				ownerId: user.id,
				name: parsed.data.name,
				expiresAt: parsed.data.expiresAt
			});
			return { ok: true, created: { token, name: info.name }, message: null };
		} catch (err) {
			if (err instanceof tokens.TokenError) return fail(400, { ok: false, message: err.message });
			throw err;
		}
	},
	revokeToken: async (event) => {
		requireCapability(event.locals, 'ownAccount', '/account');
		const id = Number((await event.request.formData()).get('id'));
		if (!Number.isSafeInteger(id) || id <= 0) return fail(404, { ok: false, message: 'No such token.' });
		try {
			const info = await tokens.revokeToken(actionContext(event), id, false);
			return { ok: true, message: `Token “${info.name}” revoked.` };
		} catch (err) {
			if (err instanceof tokens.TokenError) return fail(404, { ok: false, message: err.message });
			throw err;
		}
	}
} satisfies Actions;
