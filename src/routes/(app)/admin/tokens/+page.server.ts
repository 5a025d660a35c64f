import { fail } from '@sveltejs/kit';
import { requireCapability } from '$lib/server/auth/guard';
import { actionContext } from '$lib/server/auth/context';
import * as tokens from '$lib/server/auth/tokens';
import * as people from '$lib/server/people';
import { TokenInput } from '$lib/server/people/schemas';
import type { Actions, PageServerLoad } from './$types';

export const load = (async ({ locals }) => {
	requireCapability(locals, 'administer', '/admin/tokens');
	const everyone = await people.listPeople();
	return {
		tokens: await tokens.listTokens(),
		people: everyone.filter((p) => p.active).map((p) => ({ id: p.id, label: `${p.name ?? p.email} (${p.roleLabel})` }))
	};
}) satisfies PageServerLoad;

export const actions = {
	create: async (event) => {
		requireCapability(event.locals, 'administer', '/admin/tokens');
		const parsed = TokenInput.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { ok: false, message: parsed.error.issues[0].message });
		try {
			const { token, info } = await tokens.createToken(actionContext(event), {
				ownerId: parsed.data.userId ?? event.locals.user!.id,
				name: parsed.data.name,
				expiresAt: parsed.data.expiresAt
			});
			return { ok: true, created: { token, name: info.name, owner: info.ownerEmail }, message: null };
		} catch (err) {
			if (err instanceof tokens.TokenError) return fail(400, { ok: false, message: err.message });
			throw err;
		}
	},
	revoke: async (event) => {
		requireCapability(event.locals, 'administer', '/admin/tokens');
		const id = Number((await event.request.formData()).get('id'));
		if (!Number.isSafeInteger(id) || id <= 0) return fail(404, { ok: false, message: 'No such token.' });
		try {
			const info = await tokens.revokeToken(actionContext(event), id, true);
			return { ok: true, message: `Token “${info.name}” revoked.` };
		} catch (err) {
			if (err instanceof tokens.TokenError) return fail(404, { ok: false, message: err.message });
			throw err;
		}
	}
} satisfies Actions;
