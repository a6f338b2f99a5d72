// Debian's chromium driven by playwright-core; never a downloaded browser. playwright-core gives
// every launch a fresh, empty profile of its own.
import { existsSync } from 'node:fs';
import { chromium, type Browser } from 'playwright-core';

export const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';

export async function launchChromium(): Promise<Browser> {
	if (!existsSync(CHROMIUM)) {
		throw new Error(`no browser at ${CHROMIUM}: install Debian's chromium (apt-get install -y chromium) or set CHROMIUM_PATH`);
	}
	return chromium.launch({
		executablePath: CHROMIUM,
		args: [
			'--headless',
			'--no-sandbox',
			'--disable-gpu',
			'--disable-quic',
			'--disable-background-networking',
			'--disable-component-update',
			'--disable-sync',
			'--no-first-run'
		]
	});
}
