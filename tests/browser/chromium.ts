// Debian's chromium driven by playwright-core; never a downloaded browser.
import { existsSync, mkdtempSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { chromium, type Browser } from 'playwright-core';

export const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';

export async function launchChromium(): Promise<Browser> {
	if (!existsSync(CHROMIUM)) {
		throw new Error(`no browser at ${CHROMIUM}: install Debian's chromium (apt-get install -y chromium) or set CHROMIUM_PATH`);
	}
	const profile = mkdtempSync(path.join(os.tmpdir(), 'phasewarden-chromium-'));
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
			'--no-first-run',
			`--user-data-dir=${profile}`
		]
	});
}
