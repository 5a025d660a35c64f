import { requireCapability } from '$lib/server/auth/guard';
import { mailFakeUrl } from '$lib/server/mail/captured';
import type { LayoutServerLoad } from './$types';

// Each page below checks again; this only feeds the sub-navigation.
export const load = (async ({ locals, url }) => {
	requireCapability(locals, 'administer', url.pathname);
	return { capturedMail: mailFakeUrl() !== null };
}) satisfies LayoutServerLoad;
