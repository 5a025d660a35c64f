/**
 * Notifications over real SMTP to the local mail fake: a run moved to
 * 'reduced' mails the aerodynamicists, the on-demand digest mails the
 * program managers, and a delta beyond its band mails the aerodynamicists,
 * each with a plain-text and an HTML part; a person who
 * turned a kind off on the notifications page receives none of it.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { closeSequelize } from '../../src/lib/server/db';
import { buildSummaryCampaign, call, type SummaryCampaign } from './summary-campaign';
import { Client, demoAccount, freshPerson, mailFakeUrl, waitForMail, type FakeMail } from '../support/session';

let C: SummaryCampaign;
let quietAero: { email: string; password: string };
let quietManager: { email: string; password: string };

async function optOut(person: { email: string; password: string }, keepOn: string[]) {
	const c = new Client();
	const res = await c.signIn(person.email, person.password);
	expect(res.status).toBe(302);
	const saved = await c.form('/account/notifications', { form: 'notification-preferences', ...Object.fromEntries(keepOn.map((k) => [k, 'on'])) });
	expect([200, 303]).toContain(saved.status);
	const page = await (await c.get('/account/notifications')).text();
	for (const k of ['run_reduced', 'tolerance_exceeded', 'campaign_digest']) {
		const input = page.match(new RegExp(`<input[^>]*data-testid="pref-${k}"[^>]*>`))?.[0] ?? '';
		expect(input, k).not.toBe('');
		expect(/\bchecked\b/.test(input), k).toBe(keepOn.includes(k));
	}
}

async function all(): Promise<FakeMail[]> {
	return (await (await fetch(`${mailFakeUrl()}/messages`)).json()) as FakeMail[];
}

beforeAll(async () => {
	quietAero = await freshPerson('aerodynamicist');
	quietManager = await freshPerson('program_manager');
	await optOut(quietAero, ['tolerance_exceeded', 'campaign_digest']);
	await optOut(quietManager, ['run_reduced', 'tolerance_exceeded']);
	C = await buildSummaryCampaign();
});
afterAll(async () => {
	await closeSequelize();
});

describe('e-mail notifications', () => {
	it('mails the aerodynamicists when a run is reduced, as text and HTML, and not the one who opted out', async () => {
		const aero = demoAccount('aerodynamicist').email;
		const subject = new RegExp(`^Run ${C.runNumbers[2].replace(/[@-]/g, '.')} reduced`);
		const m = await waitForMail(aero, subject);
		expect(m.text).toContain(`/runs/${C.runIds[2]}`);
		expect(m.text).toMatch(/preliminary engineering estimates/);
		expect(m.html).toContain('<html');
		expect(m.html).toContain(`/runs/${C.runIds[2]}`);
		// The other reduced runs were announced too, each once per recipient.
		await waitForMail(aero, new RegExp(`^Run ${C.runNumbers[0]} reduced`));
		// The fresh aerodynamicist turned run_reduced off: nothing about these runs reached them.
		const toQuiet = (await all()).filter((x) => x.to.includes(quietAero.email) && / reduced \(/.test(x.subject) && C.runNumbers.some((n) => x.subject.includes(n)));
		expect(toQuiet).toEqual([]);
	});

	it('mails the aerodynamicists when a delta is out of tolerance, per kind: the run_reduced opt-out still gets it', async () => {
		// ΔCL at α_ref of the 6 % lift run is far beyond the campaign's ±0.005 band (summary-campaign.ts).
		const subject = new RegExp(`^Outside tolerance: run ${C.runNumbers[1]} `);
		const m = await waitForMail(demoAccount('aerodynamicist').email, subject);
		expect(m.text).toMatch(/ΔCL at α_ref at α = 4°: delta 0\.0\d+, band ±0\.005/);
		expect(m.html).toContain('<table');
		expect(m.html).toContain(`/runs/${C.runIds[1]}`);
		const quiet = await waitForMail(quietAero.email, subject);
		expect(quiet.subject).toBe(m.subject);
		// The run without a prediction has no deltas, so no such mail.
		expect((await all()).filter((x) => x.subject.startsWith(`Outside tolerance: run ${C.runNumbers[3]} `))).toEqual([]);
	});

	it('sends the digest on demand to the program managers, except the one who opted out', async () => {
		const r = await call(C.tokens.test_engineer, 'POST', `/campaigns/${C.campaignId}/summary/digest`, {});
		expect(r.status).toBe(202);
		expect(r.body.recipients).toContain(demoAccount('program_manager').email);
		expect(r.body.recipients).not.toContain(quietManager.email);
		const m = await waitForMail(demoAccount('program_manager').email, new RegExp(`^Campaign digest: SUM-${C.tag}`));
		expect(m.text).toContain('4 runs of 6 planned are in the database');
		expect(m.text).toContain(`/campaigns/${C.campaignId}/summary`);
		expect(m.html).toContain('<table');
		expect(m.html).toContain('Open the campaign summary');
		await new Promise((res) => setTimeout(res, 500));
		expect((await all()).filter((x) => x.to.includes(quietManager.email) && x.subject.includes(`SUM-${C.tag}`))).toEqual([]);
	});

	it('refuses the digest without credentials and for an unknown campaign', async () => {
		expect((await call('not-a-token', 'POST', `/campaigns/${C.campaignId}/summary/digest`, {})).status).toBe(401);
		expect((await call(C.tokens.program_manager, 'POST', '/campaigns/987654321/summary/digest', {})).status).toBe(404);
	});
});
