import { redirect } from '@sveltejs/kit';
import { requireCapability } from '$lib/server/auth/guard';
import type { PageServerLoad } from './$types';

export const load = (async ({ locals }) => {
	requireCapability(locals, 'administer', '/admin');
	redirect(303, '/admin/people');
}) satisfies PageServerLoad;
