/**
 * Browser sign-in through the real sign-in page form (no cookies forged),
 * and dropping files onto a drop zone the way a person's drag-and-drop does:
 * a DataTransfer with File objects dispatched as dragenter/dragover/drop.
 */
import { readFileSync } from 'node:fs';
import { basename } from 'node:path';
import type { Page } from 'playwright-core';
import { baseUrl } from './env';

/**
 * Wait until the sign-in page has hydrated: filled in before that, the fields
 * can be reset by hydration and the (then empty, required) form never submits.
 */
export async function signInPageReady(page: Page): Promise<void> {
	await page.waitForLoadState('networkidle');
}

export async function signInInBrowser(page: Page, email: string, password: string): Promise<void> {
	await page.goto(`${baseUrl()}/signin`);
	await signInPageReady(page);
	await page.fill('#email', email);
	await page.fill('#password', password);
	await Promise.all([
		page.waitForURL((u) => u.pathname !== '/signin', { timeout: 20_000 }),
		page.getByRole('button', { name: 'Sign in', exact: true }).click()
	]);
}

export interface DropFile {
	name: string;
	/** File bytes, base64 (passes binary through page.evaluate unchanged). */
	base64: string;
	type: string;
}

export function fixtureForDrop(path: string, name = basename(path), transform?: (b: Buffer) => Buffer): DropFile {
	let bytes: Buffer = readFileSync(path);
	if (transform) bytes = transform(bytes);
	const type = name.endsWith('.xlsx') ? 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet' : 'text/csv';
	return { name, base64: bytes.toString('base64'), type };
}

export async function dropFiles(page: Page, selector: string, files: DropFile[]): Promise<void> {
	await page.locator(selector).waitFor();
	await page.evaluate(
		({ selector, files }) => {
			const target = document.querySelector(selector);
			if (!target) throw new Error(`no drop target ${selector}`);
			const dt = new DataTransfer();
			for (const f of files) {
				const bin = atob(f.base64);
				const bytes = new Uint8Array(bin.length);
				for (let i = 0; i < bin.length; i++) bytes[i] = bin.charCodeAt(i);
				dt.items.add(new File([bytes], f.name, { type: f.type }));
			}
			for (const type of ['dragenter', 'dragover', 'drop']) {
				target.dispatchEvent(new DragEvent(type, { bubbles: true, cancelable: true, dataTransfer: dt }));
			}
		},
		{ selector, files }
	);
}
