/**
 * Auth.js configuration: password sign-in (Credentials) and sign-in links by
 * e-mail (Nodemailer provider, which needs the Sequelize adapter for its
 * verification tokens). Sessions are JWTs (set explicitly: with an adapter
 * the default would become database sessions, under which Credentials fails
 * silently). hooks.server.ts re-reads the person from the database on every
 * request, so a role change or deactivation applies at the next request.
 *
 * The configuration is built per request so that the decisions below know
 * the client address and request id for the failure limit and the audit.
 */
import { SvelteKitAuth, CredentialsSignin, type SvelteKitAuthConfig } from '@auth/sveltekit';
import Credentials from '@auth/sveltekit/providers/credentials';
import Nodemailer from '@auth/sveltekit/providers/nodemailer';
import SequelizeAdapter from '@auth/sequelize-adapter';
import type { RequestEvent } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import { authAdapterModels, getSequelize } from '$lib/server/db';
import * as signInRules from '$lib/server/auth/sign-in';
import { smtpSettings } from '$lib/server/mail/transport';
import * as mail from '$lib/server/mail';
import { clientAddress } from '$lib/server/auth/request';
import { log } from '$lib/server/log';

/** Sign-in links work for this long (seconds). */
export const LINK_MAX_AGE_S = 15 * 60;
/** A session lasts a working day and a half, then the person signs in again. */
const SESSION_MAX_AGE_S = 36 * 60 * 60;

/** Refused password sign-in; the form action reads `decision` to word the message. */
export class PasswordRefused extends CredentialsSignin {
	constructor(public decision: Exclude<signInRules.SignInDecision, { ok: true }>) {
		super(decision.reason);
		this.code = decision.reason;
	}
}

// One adapter per Sequelize instance: constructing it re-declares its associations.
const adapters = new WeakMap<ReturnType<typeof getSequelize>, ReturnType<typeof SequelizeAdapter>>();
function adapterFor(sequelize: ReturnType<typeof getSequelize>) {
	let adapter = adapters.get(sequelize);
	if (!adapter) {
		adapter = SequelizeAdapter(sequelize, { synchronize: false, models: authAdapterModels(sequelize) });
		adapters.set(sequelize, adapter);
	}
	return adapter;
}

/** Whether session cookies are Secure and __Secure- prefixed: exactly when the public origin is https. */
export function usesSecureCookies(event: Pick<RequestEvent, 'url'>): boolean {
	return new URL(env.ORIGIN || event.url.origin).protocol === 'https:';
}

function buildConfig(event: RequestEvent): SvelteKitAuthConfig {
	// Auth.js builds its own URLs (the link in a sign-in e-mail, redirects, the
	// session call) from AUTH_URL, else from the Host / X-Forwarded-Host /
	// X-Forwarded-Proto request headers — which anyone can set, so a forged Host
	// would put a genuine sign-in token into a link to the sender's server. Pin
	// them to the app's one public origin (adapter-node's ORIGIN) instead.
	if (env.ORIGIN && env.AUTH_URL !== env.ORIGIN) env.AUTH_URL = env.ORIGIN;
	const ctx = () => ({ ip: clientAddress(event), requestId: event.locals.requestId });
	return {
		trustHost: true,
		// Secure (and __Secure- prefixed) cookies exactly when the public origin is https, whatever a proxy header says.
		useSecureCookies: usesSecureCookies(event),
		secret: env.AUTH_SECRET,
		adapter: adapterFor(getSequelize()),
		session: { strategy: 'jwt', maxAge: SESSION_MAX_AGE_S },
		pages: { signIn: '/signin', error: '/signin', verifyRequest: '/signin/check-mail', signOut: '/signout' },
		// Never print request bodies (they hold passwords); refused sign-ins are expected, not errors.
		logger: {
			error(error: Error) {
				if (error instanceof CredentialsSignin || error.name === 'AccessDenied' || error.name === 'Verification') return;
				log().error({ authError: error.name, detail: error.message }, 'auth error');
			},
			warn(code: string) {
				// AUTH_URL is set to the bare origin on purpose (above); Auth.js's note that the
				// /auth base path is then implied is expected on every request, not a problem.
				if (code === 'env-url-basepath-redundant') return;
				log().warn({ code }, 'auth warning');
			},
			debug() {}
		},
		providers: [
			Credentials({
				id: 'credentials',
				name: 'Password',
				credentials: { email: { type: 'email' }, password: { type: 'password' } },
				async authorize(credentials) {
					const email = typeof credentials?.email === 'string' ? credentials.email : '';
					const password = typeof credentials?.password === 'string' ? credentials.password : '';
					if (!email || !password) throw new PasswordRefused({ ok: false, reason: 'wrong_password' });
					const decision = await signInRules.checkPassword(email, password, ctx());
					if (!decision.ok) throw new PasswordRefused(decision);
					return { id: decision.user.id, name: decision.user.name, email: decision.user.email };
				}
			}),
			Nodemailer({
				server: smtpSettings(),
				from: mail.mailFromAddress(),
				maxAge: LINK_MAX_AGE_S,
				async sendVerificationRequest({ identifier, url, expires }) {
					const message = mail.messages.signInLinkMessage({ url, expires });
					await mail.sendMail({ to: identifier, kind: 'sign_in_link', ...message });
				}
			})
		],
		callbacks: {
			async signIn({ user, account, email }) {
				if (account?.provider !== 'nodemailer') return true; // Credentials: authorize() decided.
				const address = user.email ?? '';
				if (email?.verificationRequest) {
					// Also reached by a raw POST to /auth/signin/nodemailer, not only through our form.
					const d = await signInRules.checkLinkRequest(address, ctx());
					return d.ok ? true : `/signin?refused=${d.reason}`;
				}
				const d = await signInRules.completeLinkSignIn(address, ctx());
				return d.ok ? true : `/signin?refused=${d.reason}`;
			},
			async jwt({ token, user }) {
				if (user?.id) token.sub = user.id;
				return token;
			},
			async session({ session, token }) {
				if (token.sub && session.user) session.user.id = token.sub;
				return session;
			}
		}
	};
}

export const { handle, signIn, signOut } = SvelteKitAuth(async (event) => buildConfig(event));
