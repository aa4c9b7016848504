// The upload page in Debian's chromium: an analyst drops the Si 532 nm pair (true T = 350 K),
// sees the browser's preview before anything is sent, submits and lands on the reading; a broken
// file is named with its row next to its input; a viewer is refused the page.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { closeDb } from '../../src/lib/server/db';
import { DEMO_ACCOUNTS, DEMO_PROJECT_SLUG } from '../../src/lib/server/seed/demo';
import { DEMO_PROFILE } from '../../src/lib/server/seed/instruments';
import { openBrowser, signInWithPassword } from '../support/browser';
import { readFileSync } from 'node:fs';
import { APP_URL, signIn } from '../support/http';

const SPECTRA = 'fixtures/spectra';
const UPLOAD = `${APP_URL}/projects/${DEMO_PROJECT_SLUG}/upload`;
const analyst = DEMO_ACCOUNTS.find((a) => a.email === 'priya.nair@halvorsen.example')!;
const viewer = DEMO_ACCOUNTS.find((a) => a.role === 'viewer')!;

let browser: Awaited<ReturnType<typeof openBrowser>>;
let page: Page;

beforeAll(async () => {
	browser = await openBrowser();
	page = browser.page;
});
afterAll(async () => {
	await browser?.close();
	await closeDb();
});

async function fillSi532Metadata() {
	const fields: Record<string, string> = {
		laser_nm: '532',
		modes: '520.7',
		exposure_stokes_s: '1',
		exposure_anti_stokes_s: '4',
		dark_counts: '300',
		c_factor: '1',
		u_c_factor: '0.02',
		label: `browser upload ${Date.now()}`
	};
	for (const [name, value] of Object.entries(fields)) await page.locator(`#${name}`).fill(value);
}

describe('upload page', () => {
	it('an analyst previews the pair in the browser, uploads it and sees the reading', async () => {
		await signInWithPassword(page, analyst.email, analyst.password);
		await page.goto(UPLOAD);
		expect(await page.textContent('body')).toContain('Laser safety');

		await page.locator('#file-stokes').setInputFiles(`${SPECTRA}/si-532-stokes.csv`);
		await page.locator('#file-anti_stokes').setInputFiles(`${SPECTRA}/si-532-anti-stokes.csv`);
		// Before anything is sent: the browser has read the files and plotted them.
		await page.locator('[data-testid=upload-preview].js-plotly-plot').waitFor();
		await expect.poll(() => page.getByTestId('stokes-summary').textContent()).toMatch(/points/);

		await fillSi532Metadata();
		await expect
			.poll(() => page.getByTestId('preview-note').textContent())
			.toContain('Raman-shift axis');

		await page.getByRole('button', { name: 'Upload and analyse' }).click();
		await page.waitForURL(/\/measurements\/[0-9a-f-]{36}$/, { timeout: 30_000 });

		// The worker fits the pair; the reading page updates by itself.
		let kelvin = NaN;
		await expect
			.poll(
				async () => {
					const text = (await page.textContent('main')) ?? '';
					const match = /(\d{3}(?:\.\d+)?)\s*K\s*±/.exec(text);
					kelvin = match ? Number(match[1]) : NaN;
					return Number.isFinite(kelvin);
				},
				{ timeout: 60_000, interval: 1000 }
			)
			.toBe(true);
		expect(kelvin).toBeGreaterThanOrEqual(340);
		expect(kelvin).toBeLessThanOrEqual(360);
		await page.locator('.js-plotly-plot').first().waitFor({ timeout: 30_000 });
	});

	it('takes laser, detector and C from the demo bench’s profile when one is chosen', async () => {
		await page.goto(UPLOAD);
		await page.locator('#file-stokes').setInputFiles(`${SPECTRA}/si-532-stokes.csv`);
		await page.locator('#file-anti_stokes').setInputFiles(`${SPECTRA}/si-532-anti-stokes.csv`);
		const option = page.locator('#profile option', { hasText: DEMO_PROFILE });
		await page.locator('#profile').selectOption((await option.getAttribute('value'))!);
		await expect
			.poll(() => page.getByTestId('profile-note').textContent())
			.toMatch(/calibration #/);
		// Only the band and the exposures: no laser, detector or C typed.
		for (const [name, value] of Object.entries({
			modes: '520.7',
			exposure_stokes_s: '1',
			exposure_anti_stokes_s: '4',
			dark_counts: '300',
			label: `profile upload ${Date.now()}`
		}))
			await page.locator(`#${name}`).fill(value);
		expect(await page.locator('#detector').inputValue()).toBe('');
		await page.getByRole('button', { name: 'Upload and analyse' }).click();
		await page.waitForURL(/\/measurements\/[0-9a-f-]{36}$/, { timeout: 30_000 });
		const used = page.getByTestId('calibration-used');
		await used.waitFor({ timeout: 60_000 });
		await expect
			.poll(() => page.getByTestId('profile-used').textContent(), { timeout: 60_000 })
			.toContain(DEMO_PROFILE);
		expect(await used.locator('a').getAttribute('href')).toMatch(
			/\/instruments\/\d+#calibration-\d+$/
		);
		// The fixture's true 350 K (fixtures/spectra/truth.json), as with the fields typed.
		const text = (await page.textContent('main')) ?? '';
		const kelvin = Number(/(\d{3}(?:\.\d+)?)\s*K\s*±/.exec(text)?.[1]);
		expect(kelvin).toBeGreaterThanOrEqual(340);
		expect(kelvin).toBeLessThanOrEqual(360);
	});

	it('names the row of a broken file next to its input, in the browser and from the server', async () => {
		await page.goto(UPLOAD);
		await page.locator('#file-stokes').setInputFiles(`${SPECTRA}/broken-not-numeric.csv`);
		await page.locator('#file-anti_stokes').setInputFiles(`${SPECTRA}/si-532-anti-stokes.csv`);
		const error = page.locator('#stokes-error');
		await expect.poll(() => error.textContent()).toMatch(/broken-not-numeric\.csv, row 19/);
		expect(await page.locator('#file-stokes').getAttribute('aria-describedby')).toBe(
			'stokes-error'
		);

		// The server says the same when the file is sent anyway, beside the same input.
		await fillSi532Metadata();
		await page.getByRole('button', { name: 'Upload and analyse' }).click();
		await expect
			.poll(() => page.getByRole('button', { name: 'Upload and analyse' }).isEnabled())
			.toBe(true);
		expect(page.url()).toBe(UPLOAD);
		expect(await error.textContent()).toContain('row 19');
		expect(await error.textContent()).toContain('n/a');
	});

	it('the action itself maps a refused file to its part (no browser checks involved)', async () => {
		const session = await signIn(analyst.email, analyst.password);
		const body = new FormData();
		for (const [k, v] of Object.entries({
			laser_nm: '532',
			modes: '520.7',
			c_factor: '1',
			u_c_factor: '0.02'
		}))
			body.set(k, v);
		const file = (name: string) =>
			new Blob([readFileSync(`${SPECTRA}/${name}`)], { type: 'text/csv' });
		body.set('stokes', file('broken-not-numeric.csv'), 'broken-not-numeric.csv');
		body.set('anti_stokes', file('si-532-anti-stokes.csv'), 'si-532-anti-stokes.csv');
		const response = await fetch(`${UPLOAD}?/upload`, {
			method: 'POST',
			body,
			headers: {
				cookie: session.header(),
				origin: APP_URL,
				accept: 'application/json',
				'x-sveltekit-action': 'true'
			}
		});
		const result = await response.json();
		expect(result.type).toBe('failure');
		expect(result.status).toBe(422);
		expect(result.data).toContain('broken-not-numeric.csv, row 19');
		expect(result.data).toContain('stokes');
	});

	it('puts a metadata error next to its field', async () => {
		await page.goto(UPLOAD);
		await page.locator('#file-stokes').setInputFiles(`${SPECTRA}/si-532-stokes.csv`);
		await page.locator('#file-anti_stokes').setInputFiles(`${SPECTRA}/si-532-anti-stokes.csv`);
		await fillSi532Metadata();
		await page.locator('#u_c_factor').fill('-0.02');
		await page.getByRole('button', { name: 'Upload and analyse' }).click();
		await expect.poll(() => page.locator('#u_c_factor-error').textContent()).toMatch(/negative/);
		expect(page.url()).toBe(UPLOAD);
	});

	it('refuses the page to a viewer with 403', async () => {
		await page.getByRole('button', { name: 'Sign out' }).click();
		await page.waitForURL(/\/signin/);
		await signInWithPassword(page, viewer.email, viewer.password);
		const response = await page.goto(UPLOAD);
		expect(response?.status()).toBe(403);
		const tabs = page.getByRole('navigation', { name: 'Project' });
		expect(await tabs.getByRole('link', { name: 'Upload' }).count()).toBe(0);
	});
});
