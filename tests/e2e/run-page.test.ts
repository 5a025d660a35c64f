/**
 * The run page over the real API: a run imported through the API (as a data
 * system would) is opened in Chromium; the engineer reduces it again with the
 * boundary corrections switched off, finds both versions in the history,
 * views the earlier one, and moves the run on in the workflow.
 *
 * Fixture: fixtures/tunnel-other-facility-us.csv, 17 points (fixtures/README.md).
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { launchChromium } from '../support/browser';
import { baseUrl } from '../support/env';
import { demoAccount } from '../support/session';
import { signInInBrowser } from '../support/browser-session';

const root = join(import.meta.dirname, '..', '..');
const results = join(root, 'test-results');

describe('the run page: re-reduction, history and workflow', () => {
	let browser: Browser;
	let page: Page;
	let runId: number;
	const pageErrors: string[] = [];

	beforeAll(async () => {
		mkdirSync(results, { recursive: true });
		browser = await launchChromium();
		page = await browser.newPage({ viewport: { width: 1440, height: 1000 } });
		page.on('pageerror', (e) => pageErrors.push(e.message));
		const who = demoAccount('test_engineer');
		await signInInBrowser(page, who.email, who.password);

		// Import through the API with the browser's session.
		const list = await (await page.request.get(`${baseUrl()}/api/v1/campaigns`)).json();
		const campaign = list.items.find((c: { kind: string }) => c.kind === 'tunnel');
		const detail = await (await page.request.get(`${baseUrl()}/api/v1/campaigns/${campaign.id}`)).json();
		const configurationId = detail.configurations[0].id;
		// LF line ends instead of the fixture's CRLF: the same data in bytes no
		// other test imports (the shared database refuses a second identical file).
		const body = Buffer.from(readFileSync(join(root, 'fixtures', 'tunnel-other-facility-us.csv'), 'utf8').replace(/\r\n/g, '\n'));
		const q = new URLSearchParams({ name: 'tunnel-other-facility-us.csv', kind: 'tunnel', runNumber: `E2E-RP-${Date.now().toString(36)}`, configurationId: String(configurationId) });
		const res = await page.request.post(`${baseUrl()}/api/v1/campaigns/${campaign.id}/runs?${q}`, { data: body, headers: { 'Content-Type': 'text/csv' } });
		expect(res.status(), await res.text()).toBe(201);
		runId = (await res.json()).run.id;
	});
	afterAll(async () => {
		await browser?.close();
	});

	it('re-reduces without corrections, keeps v1 readable and changes state', async () => {
		await page.goto(`${baseUrl()}/runs/${runId}`);
		await page.locator('[data-testid="points-table"]').waitFor({ timeout: 20_000 });
		expect(await page.locator('[data-testid="points-table"] tbody tr').count()).toBe(17);
		expect(await page.locator('[data-testid="corrections-status"]').textContent()).toContain('Applied');

		// Sorting by CL descending puts the highest-α point (12°, point 17) first.
		await page.locator('[data-testid="points-table"] th button', { hasText: 'CL' }).first().click();
		await page.locator('[data-testid="points-table"] th button', { hasText: 'CL' }).first().click();
		expect((await page.locator('[data-testid="points-table"] tbody tr').first().locator('td').first().textContent())?.trim()).toBe('17');

		await page.uncheck('[data-testid="corrections-on"]');
		await page.getByRole('button', { name: 'Reduce as a new version' }).click();
		await page.getByText('Version 2 reduced and made current.').waitFor({ timeout: 20_000 });
		await page.locator('[data-testid="corrections-status"]', { hasText: 'Not applied' }).waitFor({ timeout: 10_000 });
		expect(await page.locator('[data-testid="history"] tbody tr').count()).toBe(2);
		expect(await page.locator('[data-testid="version-select"]').inputValue()).toBe('2');

		// The earlier version stays readable.
		await page.locator('[data-testid="history"] button', { hasText: 'view points' }).click();
		await page.getByText('Viewing an earlier version').waitFor();
		expect(await page.locator('[data-testid="corrections-status"]').textContent()).toContain('Applied');
		expect(await page.locator('[data-testid="points-table"] tbody tr').count()).toBe(17);

		// Workflow: the test engineer may move an imported run on to reduced.
		await page.getByRole('button', { name: 'Mark reduced' }).click();
		await page.locator('[data-testid="run-title"] [data-testid="state-badge"]', { hasText: 'reduced' }).waitFor({ timeout: 10_000 });
		await page.screenshot({ path: join(results, 'run-page-history.png'), fullPage: true });
		expect(pageErrors).toEqual([]);
	});
});
