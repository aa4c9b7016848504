// Debian's chromium driven by playwright-core: a fresh profile per context, no network beyond
// loopback (the flags keep chromium from calling home, which this machine refuses anyway).
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { APP_URL } from './http';

export async function openBrowser(): Promise<{
	context: BrowserContext;
	page: Page;
	close: () => Promise<void>;
}> {
	const profile = mkdtempSync(join(tmpdir(), 'phonotherm-chromium-'));
	const context = await chromium.launchPersistentContext(profile, {
		executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
		headless: true,
		viewport: { width: 1280, height: 860 },
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
	const page = context.pages()[0] ?? (await context.newPage());
	return {
		context,
		page,
		close: async () => {
			await context.close();
			rmSync(profile, { recursive: true, force: true });
		}
	};
}

export async function signInWithPassword(page: Page, email: string, password: string) {
	await page.goto(`${APP_URL}/signin`);
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(password);
	await page.getByRole('button', { name: 'Sign in', exact: true }).click();
	await page.waitForURL(`${APP_URL}/projects`);
}
