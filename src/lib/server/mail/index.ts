/**
 * Outgoing e-mail. `sendMail` first writes the message to mail_outbox, then
 * tries to deliver it at once over SMTP; `queueMail` does the same inside the
 * caller's transaction, delivering after commit (a rolled-back invitation
 * sends nothing). A failed delivery
 * stays queued and `deliverDue` (run on a timer by hooks.server.ts) retries
 * it with growing pauses, up to MAX_ATTEMPTS.
 */
import { Op, type Transaction } from 'sequelize';
import { getModels } from '$lib/server/db';
import { mailFrom, transport } from './transport';
import { log } from '$lib/server/log';

export * as messages from './messages';
export { smtpSettings, mailFrom as mailFromAddress } from './transport';

export type MailKind =
	| 'invitation'
	| 'sign_in_link'
	| 'run_reduced'
	| 'tolerance_exceeded'
	| 'campaign_digest'
	| 'other';

export interface OutgoingMail {
	to: string;
	subject: string;
	text: string;
	html?: string;
	kind: MailKind;
}

export const MAX_ATTEMPTS = 5;
/** Pause before attempt n+1, in seconds (common practice, no source). */
const BACKOFF_S = [15, 60, 300, 1800];
/** These kinds carry a one-time link; once delivered, their body is removed from the outbox. */
const SECRET_BEARING: MailKind[] = ['invitation', 'sign_in_link'];

export interface SendResult {
	id: number;
	status: 'sent' | 'queued' | 'failed';
	error?: string;
}

/** Queue and deliver at once (outside any transaction). Never throws for SMTP trouble: the result says. */
export async function sendMail(mail: OutgoingMail): Promise<SendResult> {
	const { id } = await writeOutbox(mail);
	return deliverSafely(id);
}

/**
 * Queue inside the caller's transaction; delivery starts once it commits
 * (and never, if it rolls back). Await the call inside the transaction; the
 * returned `delivery` settles after the commit and never rejects.
 */
export async function queueMail(
	mail: OutgoingMail,
	options: { transaction: Transaction }
): Promise<{ id: number; delivery: Promise<SendResult> }> {
	const { id } = await writeOutbox(mail, options.transaction);
	const delivery = new Promise<SendResult>((resolve) => {
		options.transaction.afterCommit(() => {
			deliverSafely(id).then(resolve);
		});
	});
	return { id, delivery };
}

async function writeOutbox(mail: OutgoingMail, transaction?: Transaction): Promise<{ id: number }> {
	const { MailOutbox } = getModels();
	const row = await MailOutbox.create(
		{ to: mail.to, subject: mail.subject, text: mail.text, html: mail.html ?? null, kind: mail.kind },
		{ transaction }
	);
	return { id: Number(row.id) };
}

function deliverSafely(id: number): Promise<SendResult> {
	return deliver(id).catch((err) => {
		log().error({ mailId: id, err }, 'mail: could not record the delivery attempt');
		return { id, status: 'queued' as const, error: String(err) };
	});
}

/** How long one sender holds a message it is delivering before another may retry it. */
const CLAIM_SECONDS = 120;

/**
 * Try one queued message now. The message is first claimed with a lease
 * (next_attempt_at pushed ahead in one UPDATE), so two app instances — or the
 * retry timer and an immediate send — never deliver the same message twice.
 */
export async function deliver(id: number): Promise<SendResult> {
	const { MailOutbox } = getModels();
	const [claimed] = await MailOutbox.update(
		{ nextAttemptAt: new Date(Date.now() + CLAIM_SECONDS * 1000) },
		{ where: { id, status: 'queued', nextAttemptAt: { [Op.lte]: new Date() } } }
	);
	const row = await MailOutbox.findByPk(id);
	if (!row) throw new Error(`mail ${id} not found`);
	if (row.status === 'sent') return { id, status: 'sent' };
	if (claimed === 0) return { id, status: row.status === 'failed' ? 'failed' : 'queued' };
	const attempts = row.attempts + 1;
	try {
		const info = await transport().sendMail({
			from: mailFrom(),
			to: row.to,
			subject: row.subject,
			text: row.text ?? '',
			...(row.html ? { html: row.html } : {})
		});
		const refused = [...(info.rejected ?? []), ...((info as { pending?: unknown[] }).pending ?? [])];
		if (refused.length) throw new Error(`refused by the relay: ${refused.map(String).join(', ')}`);
		const redact = SECRET_BEARING.includes(row.kind as MailKind);
		await row.update({
			status: 'sent',
			attempts,
			sentAt: new Date(),
			lastError: null,
			...(redact ? { text: '(delivered; body removed because it carried a one-time link)', html: null } : {})
		});
		return { id, status: 'sent' };
	} catch (err) {
		const message = err instanceof Error ? err.message : String(err);
		const failed = attempts >= MAX_ATTEMPTS;
		const pause = BACKOFF_S[Math.min(attempts - 1, BACKOFF_S.length - 1)];
		await row.update({
			status: failed ? 'failed' : 'queued',
			attempts,
			lastError: message.slice(0, 2000),
			nextAttemptAt: new Date(Date.now() + pause * 1000)
		});
		// The address is logged, never the body (it may carry a one-time link).
		log().warn({ mailId: id, kind: row.kind, to: row.to, attempt: attempts, error: message }, 'mail delivery attempt failed');
		return { id, status: failed ? 'failed' : 'queued', error: message };
	}
}

/** Retry every queued message that is due; returns how many were tried. */
export async function deliverDue(limit = 20): Promise<number> {
	const { MailOutbox } = getModels();
	const due = await MailOutbox.findAll({
		where: { status: 'queued', nextAttemptAt: { [Op.lte]: new Date() } },
		order: [['nextAttemptAt', 'ASC']],
		limit,
		attributes: ['id']
	});
	for (const row of due) await deliver(Number(row.id));
	return due.length;
}

export interface OutboxEntryDto {
	id: number;
	to: string;
	subject: string;
	kind: string;
	status: string;
	attempts: number;
	lastError: string | null;
	createdAt: string;
	sentAt: string | null;
}

export async function recentOutbox(limit = 50): Promise<OutboxEntryDto[]> {
	const { MailOutbox } = getModels();
	const rows = await MailOutbox.findAll({ order: [['id', 'DESC']], limit });
	return rows.map((r) => ({
		id: Number(r.id),
		to: r.to,
		subject: r.subject,
		kind: r.kind,
		status: r.status,
		attempts: r.attempts,
		lastError: r.lastError,
		createdAt: r.createdAt.toISOString(),
		sentAt: r.sentAt ? r.sentAt.toISOString() : null
	}));
}
