import { fail, redirect } from '@sveltejs/kit';
import { AuthError } from '@auth/sveltekit';
import { z } from 'zod';
import { signIn, PasswordRefused } from '../../auth';
import * as signInRules from '$lib/server/auth/sign-in';
import { clientAddress, safeNext } from '$lib/server/auth/request';
import type { Actions, PageServerLoad } from './$types';

const NOTICES: Record<string, { text: string; kind: 'ok' | 'problem' }> = {
	link_expired: { text: 'This sign-in link has expired. Ask for a new one below.', kind: 'problem' },
	link_invalid: { text: 'This sign-in link is not valid or has already been used. Ask for a new one below.', kind: 'problem' },
	deactivated: { text: 'This account has been deactivated. An admin of your team can reactivate it.', kind: 'problem' },
	unknown: { text: 'There is no Spanline account for this address. Ask an admin of your team for an invitation.', kind: 'problem' },
	locked: { text: 'This account is locked after too many failed attempts. Try again later, or ask an admin to unlock it.', kind: 'problem' },
	address_blocked: { text: 'Too many failed attempts from your network address. Try again in 15 minutes.', kind: 'problem' },
	password_set: { text: 'Your password is set. Sign in with it now.', kind: 'ok' },
	signed_out: { text: 'You are signed out.', kind: 'ok' }
};

export const load = (async ({ locals, url }) => {
	const next = safeNext(url.searchParams.get('next'));
	if (locals.user) redirect(303, next);
	// `refused` and `done` are ours; `error` comes from Auth.js redirects.
	const key = url.searchParams.get('refused') ?? url.searchParams.get('done') ?? authErrorKey(url.searchParams.get('error'));
	const notice = key ? NOTICES[key] : undefined;
	return {
		next,
		email: url.searchParams.get('email') ?? '',
		notice: notice?.text ?? (url.searchParams.get('error') ? 'Sign-in did not work. Please try again.' : null),
		noticeKind: notice?.kind ?? 'problem'
	};
}) satisfies PageServerLoad;

function authErrorKey(error: string | null): string | null {
	if (error === 'Verification') return 'link_invalid';
	return null;
}

const PasswordForm = z.object({
	email: z.string().trim().min(1, 'Enter your e-mail address.').max(320),
	password: z.string().min(1, 'Enter your password.').max(1000),
	next: z.string().optional()
});

const LinkForm = z.object({
	email: z.email('Enter a valid e-mail address.').max(320),
	next: z.string().optional()
});

/** The same event with a fresh body, because Auth.js's signIn reads the request's form itself. */
function withForm(event: Parameters<Actions[string]>[0], fields: Record<string, string>) {
	const headers = new Headers(event.request.headers);
	headers.set('content-type', 'application/x-www-form-urlencoded');
	headers.delete('content-length');
	const request = new Request(event.request.url, { method: 'POST', headers, body: new URLSearchParams(fields) });
	return { ...event, request };
}

export const actions = {
	password: async (event) => {
		const parsed = PasswordForm.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) {
			return fail(400, { ok: false, email: '', message: parsed.error.issues[0].message });
		}
		const { email, password } = parsed.data;
		const next = safeNext(parsed.data.next);
		try {
			// Throws the success redirect; only Auth.js's own refusals are caught below.
			await signIn(withForm(event, { providerId: 'credentials', email, password, redirectTo: next }));
		} catch (err) {
			if (err instanceof PasswordRefused) {
				return fail(400, { ok: false, email, reason: err.decision.reason, message: signInRules.refusalMessage(err.decision) });
			}
			if (err instanceof AuthError) {
				return fail(400, { ok: false, email, message: 'Sign-in did not work. Please try again.' });
			}
			throw err;
		}
	},

	link: async (event) => {
		const parsed = LinkForm.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { ok: false, email: '', message: parsed.error.issues[0].message });
		const email = parsed.data.email.toLowerCase();
		const next = safeNext(parsed.data.next);
		// Decide here for a precise message; Auth.js's signIn callback checks again.
		const decision = await signInRules.checkLinkRequest(email, {
			ip: clientAddress(event),
			requestId: event.locals.requestId
		});
		if (!decision.ok) {
			return fail(400, { ok: false, email, reason: decision.reason, message: signInRules.refusalMessage(decision) });
		}
		try {
			await signIn(withForm(event, { providerId: 'nodemailer', email, redirectTo: next }));
		} catch (err) {
			if (err instanceof AuthError) {
				return fail(400, { ok: false, email, message: 'The sign-in link could not be sent. Please try again.' });
			}
			throw err;
		}
	}
} satisfies Actions;
