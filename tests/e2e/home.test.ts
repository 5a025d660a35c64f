import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import type { Browser } from 'playwright-core';
import { launchChromium } from '../support/browser';
import { baseUrl } from '../support/env';

describe('a visitor opens Spanline in Chromium', () => {
	let browser: Browser;
	beforeAll(async () => {
		browser = await launchChromium();
	});
	afterAll(async () => {
		await browser?.close();
	});

	it('lands on the sign-in page, styled, with no request leaving the machine', async () => {
		const page = await browser.newPage();
		const foreign: string[] = [];
		page.on('request', (req) => {
			const url = new URL(req.url());
			if (url.hostname !== '127.0.0.1' && url.protocol !== 'data:') foreign.push(req.url());
		});
		const response = await page.goto(`${baseUrl()}/`);
		expect(response?.ok()).toBe(true);
		expect(new URL(page.url()).pathname).toBe('/signin');
		await expect(page.title()).resolves.toMatch(/Sign in · Spanline/);
		expect(await page.locator('h1').first().textContent()).toContain('Spanline');
		// The self-hosted font is in use, not a fallback fetched from elsewhere.
		const font = await page.evaluate(() => getComputedStyle(document.body).fontFamily);
		expect(font).toContain('Source Sans 3');
		expect(foreign).toEqual([]);
		await page.close();
	});
});
