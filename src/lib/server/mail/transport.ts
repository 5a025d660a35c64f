import { createTransport, type Transporter } from 'nodemailer';
import { env } from '$env/dynamic/private';

/**
 * SMTP settings from the environment only, so a hosted relay replaces the
 * local fake without code changes:
 * SMTP_HOST, SMTP_PORT, SMTP_SECURE ('true' = TLS from the first byte, usually
 * port 465), SMTP_USER / SMTP_PASSWORD (empty = no AUTH), SMTP_IGNORE_TLS
 * ('true' only for the local fake), MAIL_FROM.
 */
export interface SmtpSettings {
	host: string;
	port: number;
	secure: boolean;
	ignoreTLS: boolean;
	auth?: { user: string; pass: string };
}

export function smtpSettings(): SmtpSettings {
	const user = env.SMTP_USER ?? '';
	return {
		host: env.SMTP_HOST || '127.0.0.1',
		port: Number(env.SMTP_PORT || 2525),
		secure: env.SMTP_SECURE === 'true',
		ignoreTLS: env.SMTP_IGNORE_TLS === 'true',
		// Without credentials nodemailer must not attempt AUTH at all.
		...(user ? { auth: { user, pass: env.SMTP_PASSWORD ?? '' } } : {})
	};
}

export function mailFrom(): string {
	return env.MAIL_FROM || 'Spanline <spanline@localhost>';
}

/** A fresh transport per send: cheap (no pooling), and no module-level state. */
export function transport(): Transporter {
	return createTransport({ ...smtpSettings(), connectionTimeout: 10_000, greetingTimeout: 10_000, socketTimeout: 20_000 });
}
