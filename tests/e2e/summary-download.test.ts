/**
 * A program manager signs in through the sign-in page, opens a campaign's
 * summary, sees the counts, the text, the configuration table and the trend
 * chart drawn, and downloads the XLSX (Playwright download event), which is
 * read back with @e965/xlsx. The campaign is built through the API
 * (tests/integration/summary-campaign.ts).
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import * as XLSX from '@e965/xlsx';
import type { Browser, Page } from 'playwright-core';
import { closeSequelize } from '../../src/lib/server/db';
import { launchChromium } from '../support/browser';
import { baseUrl } from '../support/env';
import { signInInBrowser } from '../support/browser-session';
import { buildSummaryCampaign, type SummaryCampaign } from '../integration/summary-campaign';

const results = join(import.meta.dirname, '..', '..', 'test-results');
let C: SummaryCampaign;
let browser: Browser;
let page: Page;
const pageErrors: string[] = [];

beforeAll(async () => {
	mkdirSync(results, { recursive: true });
	C = await buildSummaryCampaign();
	browser = await launchChromium();
	const context = await browser.newContext({ viewport: { width: 1440, height: 1100 }, acceptDownloads: true });
	page = await context.newPage();
	page.on('pageerror', (e) => pageErrors.push(e.message));
	await signInInBrowser(page, 'manager@spanline.test', 'demo-manager-2026');
});
afterAll(async () => {
	await browser?.close();
	await closeSequelize();
});

describe('campaign summary in the browser', () => {
	it('shows the summary and downloads the XLSX', async () => {
		await page.goto(`${baseUrl()}/campaigns/${C.campaignId}/summary`);
		await page.locator('[data-testid="configuration-table"]').waitFor({ timeout: 20_000 });
		expect(await page.locator('[data-testid="count-in-the-database"]').textContent()).toBe('4');
		expect(await page.locator('[data-testid="count-accepted"]').textContent()).toBe('1');
		expect(await page.locator('[data-testid="summary-text"]').textContent()).toContain('4 runs of 6 planned are in the database');
		expect(await page.locator('[data-testid="caution"]').textContent()).toContain('preliminary engineering estimates');
		expect(await page.locator('[data-testid="configuration-table"]').textContent()).toContain(C.configurationName);
		expect(await page.locator('[data-testid="worst-table"]').textContent()).toContain(C.runNumbers[1]);
		await page.locator('[data-testid="trend-clAtAlpha"] canvas').waitFor();
		await page.screenshot({ path: join(results, 'summary-page.png'), fullPage: true });

		const [download] = await Promise.all([page.waitForEvent('download'), page.click('[data-testid="download-xlsx"]')]);
		expect(download.suggestedFilename()).toMatch(/^SUM-[0-9a-f]+-summary\.xlsx$/);
		const path = join(results, download.suggestedFilename());
		await download.saveAs(path);
		const wb = XLSX.read(readFileSync(path));
		expect(wb.SheetNames).toEqual(['Summary', 'Configurations', 'Deltas', 'Worst offenders', 'Runs']);
		const deltas = XLSX.utils.sheet_to_json(wb.Sheets['Deltas'], { header: 1 }) as unknown[][];
		expect(deltas.length - 1).toBeGreaterThanOrEqual(3 * 8);
		expect(pageErrors).toEqual([]);
	});

	it('opens the printable report with the caution', async () => {
		await page.goto(`${baseUrl()}/campaigns/${C.campaignId}/report`);
		expect(await page.locator('[data-testid="report-caution"]').textContent()).toContain('preliminary engineering estimates');
		expect(await page.locator('[data-testid="report-configurations"]').textContent()).toContain(C.configurationName);
		await page.emulateMedia({ media: 'print' });
		await page.screenshot({ path: join(results, 'summary-report-print.png'), fullPage: true });
	});
});
