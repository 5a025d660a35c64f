import { error } from '@sveltejs/kit';
import { requireCapability } from '$lib/server/auth/guard';
import * as captured from '$lib/server/mail/captured';
import * as mail from '$lib/server/mail';
import type { PageServerLoad } from './$types';

/** Development and tests only: without MAIL_FAKE_URL this page does not exist. */
export const load = (async ({ locals }) => {
	requireCapability(locals, 'administer', '/admin/mail');
	if (!captured.mailFakeUrl()) error(404, { message: 'Page not found.' });
	let messages: captured.CapturedMail[] = [];
	let problem: string | null = null;
	try {
		messages = await captured.listCaptured();
	} catch (err) {
		problem = `The local mail fake did not answer: ${err instanceof Error ? err.message : String(err)}`;
	}
	return { messages, problem, outbox: await mail.recentOutbox(30) };
}) satisfies PageServerLoad;
