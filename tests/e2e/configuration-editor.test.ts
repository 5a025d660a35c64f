/**
 * An aerodynamicist edits a configuration in Chromium and sees the span
 * loading change as they type (computed in the browser by the aero core),
 * is told which station and field is wrong, and saves the edit as a variant
 * and then as a new version of it. Screenshots go to test-results/.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { randomBytes } from 'node:crypto';
import type { Browser } from 'playwright-core';
import { launchChromium } from '../support/browser';
import { baseUrl } from '../support/env';
import { demoAccount } from '../support/session';
import { signInPageReady } from '../support/browser-session';

describe('configuration editor', () => {
	let browser: Browser;
	beforeAll(async () => {
		browser = await launchChromium();
	});
	afterAll(async () => {
		await browser?.close();
	});

	it('shows the span loading change when the aerodynamicist edits the twist, and saves a variant', async () => {
		const context = await browser.newContext({ viewport: { width: 1400, height: 1300 } });
		const page = await context.newPage();
		const account = demoAccount('aerodynamicist');
		await page.goto(`${baseUrl()}/configurations`);
		expect(new URL(page.url()).pathname).toBe('/signin');
		await signInPageReady(page);
		await page.getByLabel('E-mail address', { exact: true }).fill(account.email);
		await page.getByLabel('Password').fill(account.password);
		await page.getByRole('button', { name: 'Sign in' }).click();
		await page.waitForSelector('[data-testid="configuration-table"]');
		expect(new URL(page.url()).pathname).toBe('/configurations');

		// The seeded tunnel-model wing, newest version (v2: 3° washout).
		await page.getByRole('link', { name: 'ET-1 model clean wing' }).click();
		await page.waitForSelector('[data-testid="span-loading"]');
		await page.locator('[data-testid="save"]').waitFor();
		const clBefore = Number(await page.getByTestId('loading-cl').textContent());
		const pathBefore = await page.getByTestId('loading-gamma-path').getAttribute('d');
		const areaBefore = await page.getByTestId('derived-area').textContent();
		expect(clBefore).toBeGreaterThan(0.3);

		// More washout at the tip lowers the lift at the same root α and changes the loading's shape.
		await page.getByLabel('station 2 twistDeg').fill('-8');
		await expect.poll(async () => Number(await page.getByTestId('loading-cl').textContent())).toBeLessThan(clBefore - 0.02);
		expect(await page.getByTestId('loading-gamma-path').getAttribute('d')).not.toBe(pathBefore);
		// Twist does not change the planform area.
		expect(await page.getByTestId('derived-area').textContent()).toBe(areaBefore);
		await page.screenshot({ path: 'test-results/configuration-editor.png', fullPage: true });

		// A wrong chord is named by station and field, and saving is disabled until it is fixed.
		await page.getByLabel('station 1 chord').fill('-0.1');
		await expect.poll(async () => page.getByTestId('geometry-problem').textContent()).toMatch(/station 1: chord must be > 0/);
		expect(await page.getByTestId('save').isDisabled()).toBe(true);
		await page.screenshot({ path: 'test-results/configuration-editor-invalid.png', fullPage: true });
		await page.getByLabel('station 1 chord').fill('0.12');
		await expect.poll(async () => page.getByTestId('save').isDisabled()).toBe(false);

		// Duplicate-and-modify: the variant keeps the edits and starts at v1.
		const variant = `ET-1 model washout study ${randomBytes(2).toString('hex')}`;
		await page.getByLabel('variant name').fill(variant);
		await page.getByRole('button', { name: 'Duplicate as variant' }).click();
		await page.waitForFunction((name) => document.querySelector('h1')?.textContent?.includes(name), variant);
		expect(await page.locator('h1').textContent()).toContain('v1');
		expect(await page.getByLabel('station 2 twistDeg').inputValue()).toBe('-8');

		// Saving an edit of the variant makes v2 and keeps v1.
		await page.getByLabel('station 1 twistDeg').fill('-2');
		await page.getByTestId('save').click();
		await page.waitForFunction(() => document.querySelector('h1')?.textContent?.includes('v2'));
		const versions = await page.locator('nav[aria-label="Versions"] a').allTextContents();
		expect(versions.map((v) => v.trim())).toEqual(['v2', 'v1']);
		await context.close();
	});

	it('takes a pasted section cl(α) table, shows it, and previews the nonlinear lifting line with it (not saved)', async () => {
		const context = await browser.newContext({ viewport: { width: 1400, height: 1500 } });
		const page = await context.newPage();
		const account = demoAccount('aerodynamicist');
		await page.goto(`${baseUrl()}/configurations`);
		await signInPageReady(page);
		await page.getByLabel('E-mail address', { exact: true }).fill(account.email);
		await page.getByLabel('Password').fill(account.password);
		await page.getByRole('button', { name: 'Sign in' }).click();
		await page.waitForSelector('[data-testid="configuration-table"]');
		await page.getByRole('link', { name: 'ET-1 model clean wing' }).click();
		await page.locator('[data-testid="save"]').waitFor();
		// A bad row is refused with its line number.
		await page.getByLabel('section table name').fill('demo section');
		await page.getByLabel('section table rows').fill('alpha\tcl\n-10\t-0.9\n0\t0.2\n-2\t0.1\n');
		await page.getByRole('button', { name: 'Add or replace table' }).click();
		expect(await page.getByTestId('section-table-problem').textContent()).toMatch(/line 4: α -2° does not increase/);
		// Invented demo section: straight line cl = 2π(α + 1°)·π/180 up to 12°, then a rounded peak and a fall.
		const rows = ['alpha [deg]\tcl'];
		for (let a = -16; a <= 24; a += 1) {
			const lin = 2 * Math.PI * ((a + 1) * Math.PI) / 180;
			const cl = a <= 12 ? lin : 2 * Math.PI * (Math.PI / 180) * (13 + (a - 12) - (a - 12) ** 2 / 10);
			rows.push(`${a}\t${cl.toFixed(5)}`);
		}
		await page.getByLabel('section table rows').fill(rows.join('\n'));
		await page.getByRole('button', { name: 'Add or replace table' }).click();
		await page.getByTestId('section-table-chart').waitFor();
		expect(await page.getByTestId('section-tables').textContent()).toContain('41');
		expect(await page.getByTestId('section-table-chart').getByTestId('chart-legend').textContent()).toContain('demo section (table points)');
		// No station uses it yet: no nonlinear preview.
		expect(await page.getByTestId('nonlinear-preview').count()).toBe(0);
		const stationCount = await page.locator('[data-testid="station-table"] tbody tr').count();
		for (let i = 0; i < stationCount; i++) {
			const sel = page.getByLabel(`station ${i} section table`);
			if (await sel.count()) await sel.selectOption('demo section');
		}
		await expect.poll(async () => page.getByTestId('nonlinear-preview').textContent()).toMatch(/CL \d\.\d+/);
		expect(await page.getByTestId('section-tables').textContent()).toMatch(/used by stations[\s\S]*0, 1/);
		await page.screenshot({ path: 'test-results/configuration-section-table.png', fullPage: true });
		await context.close();
	});

	it('shows a program manager the configuration read-only', async () => {
		const context = await browser.newContext();
		const page = await context.newPage();
		const account = demoAccount('program_manager');
		await page.goto(`${baseUrl()}/configurations`);
		await signInPageReady(page);
		await page.getByLabel('E-mail address', { exact: true }).fill(account.email);
		await page.getByLabel('Password').fill(account.password);
		await page.getByRole('button', { name: 'Sign in' }).click();
		await page.waitForSelector('[data-testid="configuration-table"]');
		expect(await page.getByRole('link', { name: 'New configuration' }).count()).toBe(0);
		await page.getByRole('link', { name: 'ET-1 model flap 15' }).click();
		await page.waitForSelector('[data-testid="span-loading"]');
		expect(await page.getByLabel('station 0 chord').isDisabled()).toBe(true);
		expect(await page.getByTestId('save').count()).toBe(0);
		await context.close();
	});
});
