import { redirect } from '@sveltejs/kit';
import { capabilitiesOf } from '$lib/server/auth/roles';
import type { LayoutServerLoad } from './$types';

// The hook already refuses anonymous page requests; checked again here so a
// layout-level mistake in the hook can never expose a page (DESIGN.md habit 2).
export const load = (async ({ locals, url }) => {
	if (!locals.user) redirect(303, `/signin?next=${encodeURIComponent(url.pathname + url.search)}`);
	// The frame shows only the navigation the role may use.
	return { user: locals.user, capabilities: capabilitiesOf(locals.user.role) };
}) satisfies LayoutServerLoad;
