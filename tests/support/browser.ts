import { chromium, type Browser } from 'playwright-core';

/** Debian's Chromium, headless, with no background traffic (the network here is closed). */
export function launchChromium(): Promise<Browser> {
	return chromium.launch({
		executablePath: '/usr/bin/chromium',
		args: [
			'--headless',
			'--no-sandbox',
			'--disable-gpu',
			'--disable-quic',
			'--no-first-run',
			'--disable-background-networking',
			'--disable-component-update',
			'--disable-sync'
		]
	});
}
