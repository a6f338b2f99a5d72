import { launchChromium } from '../browser/chromium';
import { signIn, startAppServer } from './support/server';
import { timelineData } from './support/timeline-data';
const data = await timelineData();
const server = await startAppServer(data.dataDir);
const browser = await launchChromium();
try {
	const { cookie } = await signIn(server);
	const url = new URL(server.url);
	for (const [name, vp] of [['desk', { width: 1280, height: 1000 }], ['phone', { width: 390, height: 844 }]] as const) {
		const context = await browser.newContext({ viewport: vp, deviceScaleFactor: 1, hasTouch: name === 'phone' });
		await context.addCookies(cookie.split('; ').map((c) => { const [n, ...v] = c.split('='); return { name: n, value: v.join('='), domain: url.hostname, path: '/' }; }));
		const page = await context.newPage();
		page.on('console', (m) => console.log('console:', m.text()));
		page.on('pageerror', (e) => console.log('pageerror:', e.message));
		await page.goto(`${server.url}/runs/${data.weekRunId}/timeline`, { waitUntil: 'load' });
		await page.screenshot({ path: `/tmp/i9tl-${name}.png`, fullPage: true });
		if (name === 'desk') {
			await page.focus('.track-area');
			await page.keyboard.press('+');
			await page.keyboard.press('+');
			await page.waitForTimeout(1500);
			console.log('url after zoom', page.url());
			await page.screenshot({ path: `/tmp/i9tl-zoom.png`, fullPage: true });
			const box = (await page.locator('.track-area').boundingBox())!;
			await page.mouse.move(box.x + box.width * 0.3, box.y + 100);
			await page.mouse.down();
			await page.mouse.move(box.x + box.width * 0.32, box.y + 120, { steps: 5 });
			await page.mouse.up();
			await page.waitForTimeout(1500);
			console.log('url after brush', page.url());
			await page.screenshot({ path: `/tmp/i9tl-brush.png`, fullPage: true });
			await page.goto(`${server.url}/runs/${data.hourRunId}/timeline`, { waitUntil: 'load' });
			await page.screenshot({ path: `/tmp/i9tl-hour.png`, fullPage: true });
		}
	}
} finally {
	await browser.close();
	await server.stop();
}
