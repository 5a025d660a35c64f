/**
 * E-mail notifications through the mail module (outbox + SMTP):
 * - `run_reduced` to the aerodynamicists when a run is reduced;
 * - `tolerance_exceeded` to the aerodynamicists when a current delta of a run
 *   is out of tolerance (once per delta row: tolerance_notices);
 * - `campaign_digest` to the program managers, on demand and on a schedule.
 *
 * There is no campaign membership: "the campaign's aerodynamicists" are all
 * active users with role aerodynamicist (and its digests go to all active
 * program managers). Each person may turn each kind off
 * (notification_preferences; no row = on).
 *
 * The notify functions never throw for mail trouble (the outbox retries) and
 * never fail the caller's change: call them after the change has committed.
 */
import { QueryTypes } from 'sequelize';
import { env } from '$env/dynamic/private';
import { getSequelize } from '$lib/server/db';
import * as mail from '$lib/server/mail';
import * as audit from '$lib/server/audit';
import * as summary from '$lib/server/summary';
import { DELTA_QUANTITIES } from '$lib/server/correlation/quantities';
import type { Role } from '$lib/server/auth/roles';
import { log } from '$lib/server/log';

export const NOTIFICATION_KINDS = ['run_reduced', 'tolerance_exceeded', 'campaign_digest'] as const;
export type NotificationKind = (typeof NOTIFICATION_KINDS)[number];

export const KIND_INFO: Record<NotificationKind, { label: string; description: string; roles: Role[] }> = {
	run_reduced: { label: 'Run reduced', description: 'A run of any campaign has been reduced and is ready for review.', roles: ['aerodynamicist'] },
	tolerance_exceeded: { label: 'Delta out of tolerance', description: 'A measured-minus-predicted delta of a run is significant and beyond the campaign’s tolerance band.', roles: ['aerodynamicist'] },
	campaign_digest: { label: 'Campaign digest', description: 'The campaign summary in brief, when someone asks for it and on the schedule.', roles: ['program_manager'] }
};

export function isKind(v: unknown): v is NotificationKind {
	return typeof v === 'string' && (NOTIFICATION_KINDS as readonly string[]).includes(v);
}

function origin(): string {
	return (env.ORIGIN || 'http://localhost:5173').replace(/\/+$/, '');
}

// ------------------------------------------------------------ preferences

export type Preferences = Record<NotificationKind, boolean>;

export async function preferencesOf(userId: string): Promise<Preferences> {
	const rows = await getSequelize().query<{ kind: NotificationKind; enabled: boolean }>('SELECT kind, enabled FROM notification_preferences WHERE user_id = :userId', {
		replacements: { userId },
		type: QueryTypes.SELECT
	});
	const prefs = Object.fromEntries(NOTIFICATION_KINDS.map((k) => [k, true])) as Preferences;
	for (const r of rows) prefs[r.kind] = r.enabled;
	return prefs;
}

export async function setPreferences(actor: { id: string; email: string }, prefs: Partial<Preferences>, meta: { requestId?: string; ip?: string | null } = {}): Promise<Preferences> {
	const sequelize = getSequelize();
	await sequelize.transaction(async (transaction) => {
		for (const kind of NOTIFICATION_KINDS) {
			if (prefs[kind] === undefined) continue;
			await sequelize.query(
				`INSERT INTO notification_preferences (user_id, kind, enabled, updated_at) VALUES (:userId, :kind, :enabled, now())
				 ON CONFLICT (user_id, kind) DO UPDATE SET enabled = EXCLUDED.enabled, updated_at = now()`,
				{ replacements: { userId: actor.id, kind, enabled: prefs[kind] }, transaction }
			);
		}
		await audit.record({ actor, action: 'notifications.preferences_changed', entityType: 'user', entityId: actor.id, details: prefs, requestId: meta.requestId, ip: meta.ip }, { transaction });
	});
	return preferencesOf(actor.id);
}

interface Recipient {
	id: string;
	email: string;
	name: string | null;
}

/** Active users of the kind's roles who have not turned it off. One query. */
export async function recipients(kind: NotificationKind): Promise<Recipient[]> {
	return getSequelize().query<Recipient>(
		`SELECT u.id, u.email, u.name FROM users u
		 WHERE u.active AND u.role IN (:roles)
		   AND NOT EXISTS (SELECT 1 FROM notification_preferences np WHERE np.user_id = u.id AND np.kind = :kind AND NOT np.enabled)
		 ORDER BY u.email`,
		{ replacements: { roles: KIND_INFO[kind].roles, kind }, type: QueryTypes.SELECT }
	);
}

async function sendToAll(kind: NotificationKind, to: Recipient[], message: mail.messages.Message): Promise<mail.SendResult[]> {
	// One message per person: addresses are not disclosed to each other.
	return Promise.all(to.map((r) => mail.sendMail({ to: r.email, subject: message.subject, text: message.text, html: message.html, kind })));
}

export interface NotifyResult {
	kind: NotificationKind;
	sent: number;
	recipients: string[];
}

function logFailure(what: string, err: unknown) {
	log().error({ err }, `notifications: ${what} failed`);
}

// ------------------------------------------------------------ run reduced

/**
 * Tell the aerodynamicists that run `runId` has been reduced (call after the
 * reduction or the move to state 'reduced' has committed). Never throws.
 */
export async function notifyRunReduced(runId: number): Promise<NotifyResult> {
	const empty: NotifyResult = { kind: 'run_reduced', sent: 0, recipients: [] };
	try {
		const [run] = await getSequelize().query<{ run_number: string; campaign_name: string; campaign_code: string; version: number | null; points: number }>(
			`SELECT r.run_number, c.name AS campaign_name, c.code AS campaign_code, rd.version,
			        (SELECT count(*) FROM points p WHERE p.reduction_id = rd.id)::int AS points
			 FROM runs r JOIN campaigns c ON c.id = r.campaign_id
			 LEFT JOIN reductions rd ON rd.run_id = r.id AND rd.is_current
			 WHERE r.id = :runId`,
			{ replacements: { runId }, type: QueryTypes.SELECT }
		);
		if (!run || run.version === null) return empty;
		const to = await recipients('run_reduced');
		const message = mail.messages.runReducedMessage({
			campaignName: `${run.campaign_code} ${run.campaign_name}`,
			runLabel: run.run_number,
			reductionVersion: run.version,
			pointCount: Number(run.points),
			url: `${origin()}/runs/${runId}`
		});
		await sendToAll('run_reduced', to, message);
		return { kind: 'run_reduced', sent: to.length, recipients: to.map((r) => r.email) };
	} catch (err) {
		logFailure(`run ${runId} reduced`, err);
		return empty;
	}
}

// ------------------------------------------------------------ out of tolerance

function fmt(v: number | null, unit: string | null): string {
	if (v === null || !Number.isFinite(v)) return '—';
	const s = Math.abs(v) !== 0 && Math.abs(v) < 1e-3 ? v.toExponential(2) : Number(v.toPrecision(3)).toString();
	return unit ? `${s} ${unit}` : s;
}

/**
 * Tell the aerodynamicists about the current deltas of run `runId` that are
 * significant and out of tolerance and have not been notified before (call
 * after the delta computation has committed). Never throws.
 */
export async function notifyDeltasOutOfTolerance(runId: number): Promise<NotifyResult> {
	const empty: NotifyResult = { kind: 'tolerance_exceeded', sent: 0, recipients: [] };
	try {
		const sequelize = getSequelize();
		// Claim the new exceedances in one statement, so two calls never notify the same delta twice.
		const claimed = await sequelize.query<{ delta_id: number }>(
			`INSERT INTO tolerance_notices (delta_id, run_id)
			 SELECT d.id, d.run_id FROM deltas d
			 WHERE d.run_id = :runId AND d.is_current AND d.significant AND d.out_of_tolerance AND d.value IS NOT NULL
			 ON CONFLICT (delta_id) DO NOTHING RETURNING delta_id`,
			{ replacements: { runId }, type: QueryTypes.SELECT }
		);
		if (!claimed.length) return empty;
		const rows = await sequelize.query<{ quantity: string; value: number; tolerance: number | null; unit: string | null; run_number: string; campaign_name: string; campaign_code: string; alpha_ref: number | null; cl_ref: number | null }>(
			`SELECT d.quantity, d.value, d.tolerance, d.unit, r.run_number, c.name AS campaign_name, c.code AS campaign_code,
			        (p.settings -> 'deltas' ->> 'alphaRefDeg')::float8 AS alpha_ref, (p.settings -> 'deltas' ->> 'clRef')::float8 AS cl_ref
			 FROM deltas d JOIN runs r ON r.id = d.run_id JOIN campaigns c ON c.id = r.campaign_id JOIN predictions p ON p.id = d.prediction_id
			 WHERE d.id IN (:ids) ORDER BY abs(d.value) / NULLIF(d.tolerance, 0) DESC NULLS LAST`,
			{ replacements: { ids: claimed.map((c) => c.delta_id) }, type: QueryTypes.SELECT }
		);
		const q = new Map(DELTA_QUANTITIES.map((x) => [x.key as string, x]));
		const first = rows[0];
		const to = await recipients('tolerance_exceeded');
		const message = mail.messages.toleranceExceededMessage({
			campaignName: `${first.campaign_code} ${first.campaign_name}`,
			runLabel: first.run_number,
			exceedances: rows.map((r) => ({
				quantity: q.get(r.quantity)?.label ?? r.quantity,
				condition: r.quantity === 'clAtAlpha' && r.alpha_ref !== null ? `α = ${r.alpha_ref}°` : r.quantity === 'cdiCounts' && r.cl_ref !== null ? `CL = ${r.cl_ref}` : 'run',
				delta: fmt(r.value, r.unit),
				band: `±${fmt(r.tolerance, r.unit)}`
			})),
			url: `${origin()}/runs/${runId}`
		});
		await sendToAll('tolerance_exceeded', to, message);
		return { kind: 'tolerance_exceeded', sent: to.length, recipients: to.map((r) => r.email) };
	} catch (err) {
		logFailure(`run ${runId} out of tolerance`, err);
		return empty;
	}
}

// ------------------------------------------------------------ digest

function digestLines(s: summary.SummaryFacts): mail.messages.DigestLine[] {
	const r = s.runs;
	const lines: mail.messages.DigestLine[] = [
		{ label: 'Runs', value: `${r.total}${r.planned !== null ? ` of ${r.planned} planned` : ''}` },
		{ label: 'Accepted / reviewed / reduced', value: `${r.accepted} / ${r.reviewed} / ${r.reduced}` },
		{ label: 'Imported only / returned', value: `${r.imported} / ${r.returned}` },
		{ label: 'Runs with deltas', value: String(r.withDeltas) }
	];
	for (const c of s.configurations.slice(0, 5)) {
		lines.push({ label: c.name, value: c.outOfTolerance ? `${c.outOfTolerance} deltas out of tolerance` : Object.keys(c.deltas).length ? 'within tolerance or not significant' : 'not compared yet' });
	}
	s.text.forEach((t, i) => lines.push({ label: i === 0 ? 'Summary' : '', value: t }));
	return lines;
}

export interface DigestResult {
	campaignId: number;
	sent: number;
	recipients: string[];
}

/** Send the campaign digest to the program managers now. Throws summary.SummaryError for an unknown campaign. */
export async function sendDigest(campaignId: number, opts: { trigger: 'on_demand' | 'schedule'; actor?: { id: string; email: string } | null; requestId?: string; ip?: string | null }): Promise<DigestResult> {
	const s = await summary.getSummaryFacts(campaignId);
	const to = await recipients('campaign_digest');
	const period = opts.trigger === 'schedule' ? `scheduled digest of ${s.generatedAt.slice(0, 10)}` : `as of ${s.generatedAt.slice(0, 16).replace('T', ' ')} UTC`;
	const message = mail.messages.campaignDigestMessage({
		campaignName: `${s.campaign.code} ${s.campaign.name}`,
		periodLabel: period,
		lines: digestLines(s),
		url: `${origin()}/campaigns/${campaignId}/summary`
	});
	await sendToAll('campaign_digest', to, message);
	const sequelize = getSequelize();
	await sequelize.transaction(async (transaction) => {
		await sequelize.query('INSERT INTO digest_deliveries (campaign_id, trigger, recipients, requested_by) VALUES (:campaignId, :trigger, :n, :by)', {
			replacements: { campaignId, trigger: opts.trigger, n: to.length, by: opts.actor?.id ?? null },
			transaction
		});
		await audit.record(
			{ actor: opts.actor ?? null, actorLabel: opts.actor ? null : 'digest schedule', action: 'campaign.digest_sent', entityType: 'campaign', entityId: campaignId, details: { trigger: opts.trigger, recipients: to.length }, requestId: opts.requestId, ip: opts.ip },
			{ transaction }
		);
	});
	return { campaignId, sent: to.length, recipients: to.map((r) => r.email) };
}

// ------------------------------------------------------------ schedule

/**
 * The digest schedule, from the environment: SPANLINE_DIGEST_INTERVAL_HOURS
 * (hours between scheduled digests of each active campaign; unset or 0 = off,
 * which is the default in tests) and SPANLINE_DIGEST_CHECK_SECONDS (how often
 * the server looks for due digests, default 300).
 */
export function digestSchedule(): { intervalHours: number; checkSeconds: number } | null {
	const hours = Number(env.SPANLINE_DIGEST_INTERVAL_HOURS ?? 0);
	if (!Number.isFinite(hours) || hours <= 0) return null;
	const check = Number(env.SPANLINE_DIGEST_CHECK_SECONDS ?? 300);
	return { intervalHours: hours, checkSeconds: Number.isFinite(check) && check >= 1 ? check : 300 };
}

/** Send the digest of every active campaign whose last scheduled digest is older than the interval. */
export async function sendDueDigests(intervalHours: number): Promise<DigestResult[]> {
	// Several app processes (workers, machines) run this schedule: a transaction-scoped
	// advisory lock lets one of them send while the others skip this round.
	return getSequelize().transaction(async (transaction) => {
		const [{ got }] = await getSequelize().query<{ got: boolean }>('SELECT pg_try_advisory_xact_lock(:key) AS got', {
			replacements: { key: DIGEST_LOCK_KEY },
			type: QueryTypes.SELECT,
			transaction
		});
		if (!got) return [];
		return sendDueDigestsLocked(intervalHours);
	});
}

/** Arbitrary, fixed key of the digest schedule's advisory lock (any 64-bit integer unique to this use). */
const DIGEST_LOCK_KEY = 7_261_420_001;

async function sendDueDigestsLocked(intervalHours: number): Promise<DigestResult[]> {
	const due = await getSequelize().query<{ id: number }>(
		`SELECT c.id FROM campaigns c
		 WHERE c.status = 'active'
		   AND NOT EXISTS (SELECT 1 FROM digest_deliveries d WHERE d.campaign_id = c.id AND d.trigger = 'schedule' AND d.sent_at > now() - make_interval(secs => :secs))
		 ORDER BY c.id`,
		{ replacements: { secs: intervalHours * 3600 }, type: QueryTypes.SELECT }
	);
	const out: DigestResult[] = [];
	for (const c of due) out.push(await sendDigest(Number(c.id), { trigger: 'schedule' }));
	return out;
}

// The one piece of process state: the schedule's timer, kept on globalThis under
// our own symbol so a second import (or a second call) never starts a second timer.
const TIMER = Symbol.for('spanline.digestScheduler');
type Holder = typeof globalThis & { [TIMER]?: ReturnType<typeof setInterval> };

/**
 * Start the digest schedule once per process (no-op when it is off or
 * already running). Call from hooks.server.ts `init`; the summary routes also
 * call it, so it starts lazily when that line is missing.
 */
export function startDigestScheduler(): boolean {
	const schedule = digestSchedule();
	const g = globalThis as Holder;
	if (!schedule || g[TIMER]) return false;
	let busy = false;
	g[TIMER] = setInterval(() => {
		if (busy) return;
		busy = true;
		sendDueDigests(schedule.intervalHours)
			.catch((err) => logFailure('scheduled digests', err))
			.finally(() => (busy = false));
	}, schedule.checkSeconds * 1000);
	g[TIMER].unref?.();
	return true;
}

/** Stop the digest schedule of this process (graceful shutdown). */
export function stopDigestScheduler(): void {
	const g = globalThis as Holder;
	if (g[TIMER]) clearInterval(g[TIMER]);
	delete g[TIMER];
}
