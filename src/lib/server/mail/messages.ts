/**
 * The team's e-mail messages, each as a subject with a plain-text and an HTML
 * part. Our own wording; the HTML is deliberately plain (inline styles only,
 * one column) so it survives any mail client, and every link is also written
 * out in full in the text part.
 */

export interface Message {
	subject: string;
	text: string;
	html: string;
}

const SIGN_OFF_TEXT = '— Spanline, the test team\'s correlation database';
const CAUTION =
	'Predictions are preliminary engineering estimates. Flight-test and airworthiness decisions follow your ' +
	"organisation's approved procedures, local regulations and licensed practice.";

export function escapeHtml(value: string): string {
	return value
		.replaceAll('&', '&amp;')
		.replaceAll('<', '&lt;')
		.replaceAll('>', '&gt;')
		.replaceAll('"', '&quot;')
		.replaceAll("'", '&#39;');
}

function formatWhen(date: Date): string {
	// UTC with the zone named: recipients may sit in other time zones than the server.
	return date.toISOString().replace('T', ' ').slice(0, 16) + ' UTC';
}

/** Wrap paragraphs (already escaped HTML) and an optional button in our frame. */
function frame(title: string, body: string[], action?: { href: string; label: string }, footer?: string): string {
	const paras = body.map((p) => `<p style="margin:0 0 14px 0">${p}</p>`).join('\n');
	const button = action
		? `<p style="margin:20px 0"><a href="${escapeHtml(action.href)}" style="display:inline-block;background:#16324a;color:#ffffff;padding:10px 18px;border-radius:4px;text-decoration:none;font-weight:600">${escapeHtml(action.label)}</a></p>
<p style="margin:0 0 14px 0;font-size:13px;color:#4a5666">If the button does not work, copy this address into your browser:<br><span style="word-break:break-all">${escapeHtml(action.href)}</span></p>`
		: '';
	return `<!doctype html>
<html><body style="margin:0;padding:24px;background:#f5f6f3;font-family:'Source Sans 3',Segoe UI,Helvetica,Arial,sans-serif;color:#1b2430;font-size:15px;line-height:1.45">
<div style="max-width:560px;margin:0 auto;background:#ffffff;border:1px solid #d9ddd6;border-top:4px solid #b8862b;padding:24px">
<p style="margin:0 0 4px 0;font-size:13px;letter-spacing:0.06em;color:#2b5573;font-weight:600">SPANLINE</p>
<h1 style="margin:0 0 16px 0;font-size:20px;color:#16324a">${escapeHtml(title)}</h1>
${paras}
${button}
${footer ? `<p style="margin:18px 0 0 0;font-size:12px;color:#8a93a0">${footer}</p>` : ''}
</div></body></html>`;
}

export function invitationMessage(p: {
	inviterName: string;
	roleLabel: string;
	url: string;
	expires: Date;
}): Message {
	const subject = 'You are invited to Spanline';
	const text = [
		`${p.inviterName} has invited you to Spanline as ${p.roleLabel}.`,
		'',
		'Choose your password here (the link works once):',
		p.url,
		'',
		`The link is valid until ${formatWhen(p.expires)}. If it has run out, ask an admin of your team for a new invitation.`,
		'If you did not expect this message, you can ignore it; nothing happens until the link is used.',
		'',
		SIGN_OFF_TEXT
	].join('\n');
	const html = frame(
		'You are invited',
		[
			`${escapeHtml(p.inviterName)} has invited you to Spanline as <strong>${escapeHtml(p.roleLabel)}</strong>.`,
			`Choose your password to start. The link works once and is valid until ${escapeHtml(formatWhen(p.expires))}.`
		],
		{ href: p.url, label: 'Choose my password' },
		'If you did not expect this message, you can ignore it; nothing happens until the link is used.'
	);
	return { subject, text, html };
}

export function signInLinkMessage(p: { url: string; expires: Date }): Message {
	const subject = 'Your Spanline sign-in link';
	const text = [
		'Someone (we hope you) asked for a sign-in link for Spanline.',
		'',
		'Open this address to sign in (the link works once):',
		p.url,
		'',
		`It is valid until ${formatWhen(p.expires)}.`,
		'If you did not ask for it, ignore this message; your account stays as it is.',
		'',
		SIGN_OFF_TEXT
	].join('\n');
	const html = frame(
		'Sign in to Spanline',
		[
			'Someone (we hope you) asked for a sign-in link for Spanline.',
			`The link works once and is valid until ${escapeHtml(formatWhen(p.expires))}.`
		],
		{ href: p.url, label: 'Sign me in' },
		'If you did not ask for it, ignore this message; your account stays as it is.'
	);
	return { subject, text, html };
}

export function runReducedMessage(p: {
	campaignName: string;
	runLabel: string;
	reductionVersion: number;
	pointCount: number;
	url: string;
}): Message {
	const subject = `Run ${p.runLabel} reduced (${p.campaignName})`;
	const text = [
		`Run ${p.runLabel} of campaign ${p.campaignName} has been reduced (reduction version ${p.reductionVersion}, ${p.pointCount} points).`,
		'',
		'Review it here:',
		p.url,
		'',
		CAUTION,
		'',
		SIGN_OFF_TEXT
	].join('\n');
	const html = frame(
		`Run ${p.runLabel} reduced`,
		[
			`Run <strong>${escapeHtml(p.runLabel)}</strong> of campaign ${escapeHtml(p.campaignName)} has been reduced ` +
				`(reduction version ${p.reductionVersion}, ${p.pointCount} points).`
		],
		{ href: p.url, label: 'Review the run' },
		escapeHtml(CAUTION)
	);
	return { subject, text, html };
}

export interface ToleranceExceedance {
	quantity: string;
	condition: string;
	delta: string;
	band: string;
}

export function toleranceExceededMessage(p: {
	campaignName: string;
	runLabel: string;
	exceedances: ToleranceExceedance[];
	url: string;
}): Message {
	const subject = `Outside tolerance: run ${p.runLabel} (${p.campaignName})`;
	const lines = p.exceedances.map((e) => `  ${e.quantity} at ${e.condition}: delta ${e.delta}, band ${e.band}`);
	const text = [
		`Measured minus predicted is outside the tolerance band for run ${p.runLabel} of campaign ${p.campaignName}:`,
		...lines,
		'',
		'Details:',
		p.url,
		'',
		CAUTION,
		'',
		SIGN_OFF_TEXT
	].join('\n');
	const rows = p.exceedances
		.map(
			(e) =>
				`<tr><td style="padding:4px 8px;border-bottom:1px solid #d9ddd6">${escapeHtml(e.quantity)}</td><td style="padding:4px 8px;border-bottom:1px solid #d9ddd6">${escapeHtml(e.condition)}</td><td style="padding:4px 8px;border-bottom:1px solid #d9ddd6;color:#b4442a">${escapeHtml(e.delta)}</td><td style="padding:4px 8px;border-bottom:1px solid #d9ddd6">${escapeHtml(e.band)}</td></tr>`
		)
		.join('');
	const table = `<table style="border-collapse:collapse;font-size:14px;font-variant-numeric:tabular-nums"><tr><th align="left" style="padding:4px 8px">Quantity</th><th align="left" style="padding:4px 8px">Condition</th><th align="left" style="padding:4px 8px">Delta</th><th align="left" style="padding:4px 8px">Band</th></tr>${rows}</table>`;
	const html = frame(
		`Outside tolerance: run ${p.runLabel}`,
		[
			`Measured minus predicted is outside the tolerance band for run <strong>${escapeHtml(p.runLabel)}</strong> of campaign ${escapeHtml(p.campaignName)}:`,
			table
		],
		{ href: p.url, label: 'Open the run' },
		escapeHtml(CAUTION)
	);
	return { subject, text, html };
}

export interface DigestLine {
	label: string;
	value: string;
}

export function campaignDigestMessage(p: {
	campaignName: string;
	periodLabel: string;
	lines: DigestLine[];
	url: string;
}): Message {
	const subject = `Campaign digest: ${p.campaignName}, ${p.periodLabel}`;
	const text = [
		`Campaign ${p.campaignName}, ${p.periodLabel}`,
		'',
		...p.lines.map((l) => `  ${l.label}: ${l.value}`),
		'',
		'The full summary:',
		p.url,
		'',
		CAUTION,
		'',
		SIGN_OFF_TEXT
	].join('\n');
	const rows = p.lines
		.map(
			(l) =>
				`<tr><td style="padding:3px 12px 3px 0;color:#4a5666">${escapeHtml(l.label)}</td><td style="padding:3px 0;font-variant-numeric:tabular-nums">${escapeHtml(l.value)}</td></tr>`
		)
		.join('');
	const html = frame(
		`${p.campaignName}: ${p.periodLabel}`,
		[`<table style="border-collapse:collapse;font-size:14px">${rows}</table>`],
		{ href: p.url, label: 'Open the campaign summary' },
		escapeHtml(CAUTION)
	);
	return { subject, text, html };
}
