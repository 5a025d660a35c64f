/**
 * A test engineer imports a tunnel run through the pages, in Chromium,
 * against the built server, the real database and the real API: sign in,
 * open the tunnel campaign, drop the clean polar fixture, confirm the
 * proposed mapping, watch the progress, land on the run page with its three
 * charts drawn; then a broken fixture shows its row/column problem.
 *
 * Expected values come from fixtures/README.md and fixtures/scenario.ts
 * (our own invented scenario): 21 points, α = −6…14°.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { launchChromium } from '../support/browser';
import { baseUrl } from '../support/env';
import { demoAccount } from '../support/session';
import { dropFiles, fixtureForDrop, signInInBrowser } from '../support/browser-session';

const root = join(import.meta.dirname, '..', '..');
const results = join(root, 'test-results');

/** Count canvas pixels that are not (near) white: a drawn chart has many. */
async function inkedPixels(page: Page, testid: string): Promise<number> {
	return page.$eval(`[data-testid="${testid}"] canvas`, (c) => {
		const canvas = c as HTMLCanvasElement;
		const ctx = canvas.getContext('2d');
		if (!ctx || canvas.width === 0 || canvas.height === 0) return 0;
		const { data } = ctx.getImageData(0, 0, canvas.width, canvas.height);
		let n = 0;
		for (let i = 0; i < data.length; i += 4) if (data[i + 3] > 0 && (data[i] < 200 || data[i + 1] < 200 || data[i + 2] < 200)) n++;
		return n;
	});
}

async function openTunnelCampaignUpload(page: Page): Promise<void> {
	await page.goto(`${baseUrl()}/`);
	await page.locator('[data-testid="campaign-table"] tr', { hasText: 'Wind tunnel' }).first().locator('a').first().click();
	await page.waitForURL(/\/campaigns\/\d+$/);
	await page.locator('[data-testid="runs-table"] tbody a').first().waitFor();
	// The seeded campaign lists its runs (R001 … R005 of the demo) with their states.
	expect(await page.locator('[data-testid="runs-table"] [data-testid="state-badge"]').count()).toBeGreaterThanOrEqual(5);
	await page.screenshot({ path: join(results, 'campaign-page.png'), fullPage: true });
	await page.click('[data-testid="upload-link"]');
	await page.waitForURL(/\/campaigns\/\d+\/upload$/);
}

describe('a test engineer imports a run through the pages', () => {
	let browser: Browser;
	let page: Page;
	const pageErrors: string[] = [];

	beforeAll(async () => {
		mkdirSync(results, { recursive: true });
		browser = await launchChromium();
		page = await browser.newPage({ viewport: { width: 1440, height: 1000 } });
		page.on('pageerror', (e) => pageErrors.push(e.message));
		const who = demoAccount('test_engineer');
		await signInInBrowser(page, who.email, who.password);
	});
	afterAll(async () => {
		await browser?.close();
	});

	it('drops the clean polar, confirms the mapping, sees progress and lands on the charted run page', async () => {
		await openTunnelCampaignUpload(page);
		// The shared test database may already hold these exact bytes (the
		// integration tests import the same fixture, and a second upload of one
		// SHA-256 is refused as a duplicate): the file goes in with CRLF line
		// ends, as a Windows data system writes it — same data, other bytes.
		const file = fixtureForDrop(join(root, 'fixtures', 'tunnel-clean-polar.csv'), 'tunnel-clean-polar.csv', (b) =>
			Buffer.from(b.toString('utf8').replace(/\r?\n/g, '\r\n'))
		);
		await dropFiles(page, '[data-testid="file-drop"]', [file]);

		const item = page.locator('[data-testid="import-item"]').first();
		await item.locator('[data-testid="mapping-table"]').waitFor({ timeout: 20_000 });
		expect(await item.locator('[data-testid="layout"]').textContent()).toContain('separator “,”, decimal point');
		// Proposed from the headers: Alpha [deg] → α in degrees, Lift [N] → lift in N.
		expect(await item.locator('[data-testid="field-2"]').inputValue()).toBe('alpha');
		expect(await item.locator('[data-testid="unit-2"]').inputValue()).toBe('deg');
		expect(await item.locator('[data-testid="field-5"]').inputValue()).toBe('lift');
		expect(await item.locator('[data-testid="field-6"]').inputValue()).toBe('drag');
		// A run number of our own, so the test never collides with another run 7.
		await item.locator('[data-testid="run-number"]').fill(`E2E-${Date.now().toString(36)}`);
		await page.screenshot({ path: join(results, 'import-mapping.png'), fullPage: true });

		await item.locator('[data-testid="import-button"]').click();
		// Progress shows (the bars appear while the request runs) ...
		await item.locator('[data-testid="upload-progress"]').waitFor({ state: 'attached', timeout: 10_000 }).catch(() => undefined);
		// ... and ends on the run page.
		try {
			await page.waitForURL(/\/runs\/\d+$/, { timeout: 30_000 });
		} catch (e) {
			await page.screenshot({ path: join(results, 'import-run-failure.png'), fullPage: true });
			throw new Error(`no run page; the import item says: ${await item.textContent()}`, { cause: e });
		}
		await page.locator('[data-testid="points-table"]').waitFor({ timeout: 20_000 });

		expect(await page.locator('[data-testid="points-table"] tbody tr').count()).toBe(21);
		expect(await page.locator('[data-testid="points-table"] [data-testid="row-count"]').textContent()).toContain('21 rows');
		for (const id of ['chart-lift', 'chart-polar', 'chart-cl2']) {
			const legend = page.locator(`[data-testid="${id}"] [data-testid="chart-legend"] li`);
			expect(await legend.count()).toBeGreaterThanOrEqual(1);
			expect((await legend.allTextContents()).map((t) => t.trim())).toContain('measured');
			expect(await inkedPixels(page, id)).toBeGreaterThan(500);
		}
		expect(await page.locator('[data-testid="caution"]').textContent()).toMatch(/preliminary engineering estimates/);
		expect(await page.locator('[data-testid="conditions"]').textContent()).toContain('Pa');
		await page.screenshot({ path: join(results, 'import-run-page.png'), fullPage: true });
		expect(pageErrors).toEqual([]);
	});

	it('shows the row and column of a broken file and stores nothing', async () => {
		await openTunnelCampaignUpload(page);
		await dropFiles(page, '[data-testid="file-drop"]', [fixtureForDrop(join(root, 'fixtures', 'broken', 'wrong-types.csv'))]);
		const item = page.locator('[data-testid="import-item"]').first();
		await item.locator('[data-testid="mapping-table"]').waitFor({ timeout: 20_000 });
		await item.locator('[data-testid="run-number"]').fill(`E2E-BAD-${Date.now().toString(36)}`);
		await item.locator('[data-testid="import-button"]').click();
		const problems = item.locator('[data-testid="problem-list"]');
		try {
			await problems.waitFor({ timeout: 20_000 });
		} catch (e) {
			await page.screenshot({ path: join(results, 'import-problems-failure.png'), fullPage: true });
			throw new Error(`no problem list; the import item says: ${await item.textContent()}`, { cause: e });
		}
		const text = (await problems.textContent()) ?? '';
		// wrong-types.csv line 5 has 'n/a' in "Alpha [deg]" (header on line 1).
		expect(text).toMatch(/Alpha \[deg\]/);
		expect(text).toMatch(/row 5/);
		expect(text).toContain('n/a');
		expect(await item.getAttribute('data-status')).toBe('invalid');
		expect(await item.locator('[data-testid="exclude-retry"]').isEnabled()).toBe(true);
		await page.screenshot({ path: join(results, 'import-problems.png'), fullPage: true });
		expect(page.url()).toMatch(/\/upload$/);
	});
});
