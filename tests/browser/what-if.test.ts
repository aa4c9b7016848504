// The what-if panel in Debian's chromium: a reviewer changes the coverage factor and the exponent,
// the panel (the engine running in the page) shows T and U at once, and the re-analysis requested
// from there gives the same T and U on the server.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { closeDb } from '../../src/lib/server/db';
import { openBrowser, signInWithPassword } from '../support/browser';
import { APP_URL } from '../support/http';
import { getJson, measureSi532, waitForAnalysis } from '../support/pairs';
import { makeWorld, PASSWORD, type World } from '../support/world';

let browser: Awaited<ReturnType<typeof openBrowser>>;
let page: Page;
let world: World;
const M = { id: '', reading: '' };

beforeAll(async () => {
	world = await makeWorld('what-if');
	Object.assign(M, await measureSi532(world.token, 'what-if walk'));
	browser = await openBrowser();
	page = browser.page;
}, 90_000);
afterAll(async () => {
	await browser?.close();
	await closeDb();
});

/** The panel's T and U at full precision, from the hover text of its headline. */
async function panelFigures() {
	const title = await page.locator('[title^="T = "]').getAttribute('title');
	const m = /^T = (\S+) K, U = (\S+) K$/.exec(title ?? '');
	expect(m, `panel headline title: ${title}`).not.toBeNull();
	return { t: Number(m![1]), u: Number(m![2]) };
}

const same = (a: number, b: number) => Math.abs(a - b) <= 1e-9 * Math.abs(b);

describe('the what-if panel', () => {
	it('moves T and U at once, and a re-analysis with its settings gives the same figures', async () => {
		await signInWithPassword(page, world.people.reviewer.email, PASSWORD);
		await page.goto(`${APP_URL}/projects/${world.project.slug}/measurements/${M.id}`);
		const stored = (await getJson(world.token, `/api/v1/measurements/${M.id}/reading`)).body;
		// Unchanged settings: the panel starts on the stored reading's own figures.
		await page.locator('[title^="T = "]').waitFor({ timeout: 30_000 });
		const start = await panelFigures();
		expect(same(start.t, stored.temperature_k)).toBe(true);
		expect(same(start.u, stored.expanded_uncertainty_k)).toBe(true);

		// A Gaussian on these Lorentzian bands (fixtures/spectra/README.md) fits badly, and says so.
		const panel = page.locator('section[aria-labelledby="what-if-head"]');
		await page.locator('#wi-lineshape').selectOption('gaussian');
		await expect.poll(() => panel.textContent()).toContain('Flags the fit raises');
		expect(await panel.textContent()).toContain('Reduced χ²');
		await page.locator('#wi-lineshape').selectOption('lorentzian');
		await expect.poll(() => panel.textContent()).not.toContain('Flags the fit raises');

		await page.locator('#wi-k').fill('3');
		await expect.poll(async () => (await panelFigures()).u).not.toBe(start.u);
		const byK = await panelFigures();
		// Source: JCGM 100:2008 §6.2.1, U = k·u(T) — hand computation from the stored u(T).
		expect(same(byK.u, 3 * stored.u_temperature_k)).toBe(true);
		expect(byK.t).toBe(start.t);

		await page.getByLabel('Exponent (detector)').selectOption('energy');
		await expect.poll(async () => (await panelFigures()).t).not.toBe(start.t);
		const shown = await panelFigures();

		await page.getByRole('button', { name: 'Request a re-analysis with these settings' }).click();
		await page.waitForURL(/requested=1/);
		const done = await waitForAnalysis(world.token, M.id, 60_000);
		expect(done.status).toBe('done');
		const fresh = done.reading;
		expect(fresh.id).not.toBe(M.reading);
		expect(fresh.exponent).toBe(4);
		expect(fresh.coverage_factor).toBe(3);
		expect(
			same(shown.t, fresh.temperature_k),
			`panel ${shown.t} K, server ${fresh.temperature_k} K`
		).toBe(true);
		expect(
			same(shown.u, fresh.expanded_uncertainty_k),
			`panel ${shown.u} K, server ${fresh.expanded_uncertainty_k} K`
		).toBe(true);
	}, 120_000);

	it('is not shown to a viewer', async () => {
		await page.context().clearCookies();
		await signInWithPassword(page, world.people.viewer.email, PASSWORD);
		await page.goto(`${APP_URL}/projects/${world.project.slug}/measurements/${M.id}`);
		await page.getByRole('heading', { name: 'Uncertainty budget' }).waitFor();
		expect(await page.getByRole('heading', { name: 'What if' }).count()).toBe(0);
	}, 60_000);
});
