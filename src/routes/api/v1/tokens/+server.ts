import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import { can } from '$lib/server/auth/roles';
import { actionContext, readJson } from '$lib/server/auth/context';
import * as tokens from '$lib/server/auth/tokens';
import { TokenInput, issuesToDetails } from '$lib/server/people/schemas';
import { apiError } from '$lib/server/http';
import type { RequestHandler } from './$types';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/**
 * Your API tokens. Admins may pass ?userId=<id> for someone else's, or
 * ?all=true for everyone's.
 */
export const GET: RequestHandler = async ({ locals, url }) => {
	const denied = denyApi(locals, 'ownAccount');
	if (denied) return denied;
	const userId = url.searchParams.get('userId');
	const all = url.searchParams.get('all') === 'true';
	if (userId !== null && !UUID.test(userId)) {
		return apiError(400, 'invalid', 'userId must be a user id (a UUID).', [{ field: 'userId', message: 'not a UUID' }]);
	}
	if ((all || (userId && userId !== locals.user!.id)) && !can(locals.user!.role, 'administer')) {
		return apiError(403, 'forbidden', "Only admins see other people's tokens (needs 'administer').");
	}
	return json({ tokens: await tokens.listTokens(all ? undefined : (userId ?? locals.user!.id)) });
};

/** Create a token (for yourself; admins also for others with userId). The token is in this answer only. */
export const POST: RequestHandler = async (event) => {
	const { locals, request } = event;
	const denied = denyApi(locals, 'ownAccount');
	if (denied) return denied;
	const parsed = TokenInput.safeParse(await readJson(request));
	if (!parsed.success) return apiError(400, 'invalid', 'The token request is not valid.', issuesToDetails(parsed.error));
	const ownerId = parsed.data.userId ?? locals.user!.id;
	if (ownerId !== locals.user!.id && !can(locals.user!.role, 'administer')) {
		return apiError(403, 'forbidden', "Only admins create tokens for others (needs 'administer').");
	}
	try {
		const { token, info } = await tokens.createToken(actionContext(event), {
			ownerId,
			name: parsed.data.name,
			expiresAt: parsed.data.expiresAt
		});
		return json({ token, info }, { status: 201, headers: { 'cache-control': 'no-store' } });
	} catch (err) {
		if (err instanceof tokens.TokenError) {
			return apiError(err.code === 'not_found' ? 404 : 400, err.code, err.message, err.field ? [{ field: err.field, message: err.message }] : []);
		}
		throw err;
	}
};
