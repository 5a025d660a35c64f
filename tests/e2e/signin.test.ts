/**
 * Sign-in through the real form in Chromium, as each role: the frame shows
 * the role and only the navigation that role may use; a wrong password is
 * explained on the page; the form works from the keyboard alone.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import type { Browser } from 'playwright-core';
import { launchChromium } from '../support/browser';
import { baseUrl } from '../support/env';
import { demoAccount } from '../support/session';
import { signInPageReady } from '../support/browser-session';
import { ROLES, ROLE_LABELS, can, type Capability, type Role } from '../../src/lib/server/auth/roles';

/** Each navigation link and the capability it needs (as in AppFrame.svelte): add new links here. */
const NAV_NEEDS: Record<string, Capability> = {
	Campaigns: 'read',
	Configurations: 'read',
	Account: 'ownAccount',
	Admin: 'administer'
};
const expectedNav = (role: Role, shown: string[]) => Object.keys(NAV_NEEDS).filter((l) => can(role, NAV_NEEDS[l]) && (shown.includes(l) || l === 'Admin' || l === 'Account'));

describe('signing in through the browser', () => {
	let browser: Browser;
	beforeAll(async () => {
		browser = await launchChromium();
	});
	afterAll(async () => {
		await browser?.close();
	});

	for (const role of ROLES) {
		it(`as ${role}: returns to the page asked for, shows the role badge and only its navigation`, async () => {
			const context = await browser.newContext();
			const page = await context.newPage();
			const account = demoAccount(role);
			// Asked for a page first: after sign-in the person returns to it.
			const asked = role === 'admin' ? '/admin/people' : '/account';
			await page.goto(`${baseUrl()}${asked}`);
			expect(new URL(page.url()).pathname).toBe('/signin');
			await signInPageReady(page);
			await page.getByLabel('E-mail address', { exact: true }).fill(account.email);
			await page.getByLabel('Password').fill(account.password);
			await page.getByRole('button', { name: 'Sign in' }).click();
			await page.waitForSelector('[data-testid="role-badge"]');
			expect(new URL(page.url()).pathname).toBe(asked);
			expect(await page.getByTestId('role-badge').textContent()).toBe(ROLE_LABELS[role]);
			const nav = (await page.locator('nav[aria-label="Main"] a').allTextContents()).map((t) => t.trim());
			// Every link shown is known and allowed; Account and Admin are there exactly when the role may use them.
			expect(nav.filter((l) => !(l in NAV_NEEDS)), 'links missing from NAV_NEEDS').toEqual([]);
			expect(nav).toEqual(expectedNav(role, nav));
			expect(nav.includes('Admin')).toBe(role === 'admin');
			// Typing the admin address anyway: our 403 page for everyone but admins.
			const res = await page.goto(`${baseUrl()}/admin/people`);
			if (role === 'admin') {
				expect(res?.status()).toBe(200);
				await expect(page.getByTestId('people-table').isVisible()).resolves.toBe(true);
			} else {
				expect(res?.status()).toBe(403);
				expect(await page.locator('h1').textContent()).toContain('Not allowed');
			}

			await page.goto(`${baseUrl()}/`);
			await page.getByRole('button', { name: 'Sign out' }).click();
			await page.waitForURL(/\/signin/);
			expect(await page.getByTestId('signin-notice').textContent()).toContain('You are signed out');
			await context.close();
		});
	}

	it('explains a wrong password, and works from the keyboard', async () => {
		const context = await browser.newContext();
		const page = await context.newPage();
		await page.goto(`${baseUrl()}/signin`);
		await signInPageReady(page);
		// The e-mail field comes first in the tab order.
		await page.keyboard.press('Tab');
		await page.keyboard.type('nobody-here@example.test');
		await page.keyboard.press('Tab');
		await page.keyboard.type('not-a-password');
		await page.keyboard.press('Enter');
		const notice = page.getByTestId('signin-notice');
		await notice.waitFor();
		expect(await notice.textContent()).toContain('There is no Spanline account for this address');
		expect(await notice.getAttribute('role')).toBe('alert');
		await context.close();
	});
});
