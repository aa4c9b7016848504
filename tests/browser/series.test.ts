// Series views in Debian's chromium: a viewer subscribes to a series with the page's button,
// a click on a map cell opens that cell's reading, and a time series draws its T ± U band.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { closeDb } from '../../src/lib/server/db';
import { openBrowser, signInWithPassword } from '../support/browser';
import { APP_URL } from '../support/http';
import { postMeasurement, syntheticCsv, waitForAnalysis } from '../support/pairs';
import { makeWorld, PASSWORD, type World } from '../support/world';

let browser: Awaited<ReturnType<typeof openBrowser>>;
let page: Page;
let world: World;
const MAP = 'film C map';
const TREND = 'film C cool-down';
/** Measurement id of each map cell, by x (µm); the map is one row at y = 0. */
const cells = new Map<number, string>();

async function upload(t: number, seed: number, metadata: Record<string, unknown>) {
	const pair = syntheticCsv({
		laserNm: 532,
		modeCm1: 520.7,
		temperatureK: t,
		exponent: 3,
		lineshape: 'lorentzian',
		fwhmCm1: 3.5,
		stokesCounts: 1e5,
		seed
	});
	const response = await postMeasurement(
		world.token,
		{ stokes: pair.stokes, anti_stokes: pair.anti_stokes },
		{
			laser_nm: 532,
			modes: [520.7],
			x_axis: 'raman-shift',
			c_factor: 1,
			u_c_factor: 0.02,
			...metadata
		}
	);
	expect(response.status).toBe(202);
	return ((await response.json()) as { id: string }).id;
}

beforeAll(async () => {
	world = await makeWorld('series-browser');
	const ids = await Promise.all([
		...[0, 10].map(async (x, i) => {
			const id = await upload(320 + 60 * i, 40 + i, {
				label: `C (${x}, 0)`,
				series: MAP,
				x,
				y: 0
			});
			cells.set(x, id);
			return id;
		}),
		...[0, 1, 2].map((i) =>
			upload(380 - 30 * i, 50 + i, {
				label: `C +${10 * i} min`,
				series: TREND,
				acquired_at: new Date(Date.UTC(2026, 10, 25, 10, 10 * i)).toISOString()
			})
		)
	]);
	for (const id of ids) expect((await waitForAnalysis(world.token, id)).status).toBe('done');
	browser = await openBrowser();
	page = browser.page;
	await signInWithPassword(page, world.people.viewer.email, PASSWORD);
}, 90_000);
afterAll(async () => {
	await browser?.close();
	await closeDb();
});

const open = (name: string) =>
	page.goto(`${APP_URL}/projects/${world.project.slug}/series/${encodeURIComponent(name)}`);

describe('series pages in the browser', () => {
	it('lets a viewer subscribe and unsubscribe', async () => {
		await open(MAP);
		await page.getByRole('button', { name: 'Subscribe to alerts' }).click();
		await page.getByRole('button', { name: 'Unsubscribe from alerts' }).waitFor();
		await page.reload();
		await page.getByRole('button', { name: 'Unsubscribe from alerts' }).click();
		await page.getByRole('button', { name: 'Subscribe to alerts' }).waitFor();
	});

	it('opens the reading of the map cell that is clicked', async () => {
		await open(MAP);
		// The temperature map is the first heat map; its drag layer covers the plot area.
		const area = page.locator('[aria-label="T"] .nsewdrag').first();
		await area.waitFor();
		const box = (await area.boundingBox())!;
		// Two cells side by side: the right one (x = 10 µm) is at three quarters of the width.
		await page.mouse.click(box.x + box.width * 0.75, box.y + box.height / 2);
		await page.waitForURL(
			`${APP_URL}/projects/${world.project.slug}/measurements/${cells.get(10)}`
		);
		expect(await page.getByText('C (10, 0)').first().isVisible()).toBe(true);
	});

	it('draws a time series as a trend with its uncertainty band', async () => {
		await open(TREND);
		const trend = page.getByTestId('trend');
		await trend.locator('.js-plotly-plot').waitFor();
		// Plotly draws a `fill: tonexty` trace as a filled path: the T ± U band.
		expect(await trend.locator('path.js-fill').count()).toBeGreaterThan(0);
		expect(await trend.locator('g.trace.scatter').count()).toBe(3);
	});
});
