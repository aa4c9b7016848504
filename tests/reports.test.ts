// Printable reports (issue 6, item 6) in Debian's chromium: a batch series of three fixture pairs,
// one reading approved. The reading report shows the reading API's budget, the sign-off and the
// cautions; printed (print media, and page.pdf() as "Save as PDF" does) the app's navigation
// is gone and the sections start on pages of their own.
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb } from '../src/lib/server/db';
import { openBrowser, signInWithPassword } from './support/browser';
import { APP_URL, signIn } from './support/http';
import { FIXTURE_PAIRS, fixture, getJson, postMeasurement, waitForAnalysis } from './support/pairs';
import { makeWorld, PASSWORD, type World } from './support/world';

const SERIES = 'report batch R1';
let world: World;
let browser: Awaited<ReturnType<typeof openBrowser>>;
let page: Page;
/** The three measurements, the first one approved. */
const ids: string[] = [];

const readingReport = (id: string) => `/projects/${world.project.slug}/measurements/${id}/report`;
const seriesReport = () =>
	`/projects/${world.project.slug}/series/${encodeURIComponent(SERIES)}/report`;

beforeAll(async () => {
	world = await makeWorld('reports');
	for (const [i, pair] of FIXTURE_PAIRS.slice(0, 3).entries()) {
		const parts = Object.fromEntries(Object.entries(pair.files).map(([k, f]) => [k, fixture(f)]));
		const response = await postMeasurement(world.token, parts, {
			...pair.metadata,
			c_factor: 1,
			u_c_factor: 0.02,
			label: `report ${pair.id}`,
			series: SERIES,
			batch: `R1-${i + 1}`,
			acquired_at: new Date(Date.UTC(2026, 10, 2, 9, i)).toISOString()
		});
		expect(response.status).toBe(202);
		ids.push((await response.json()).id);
	}
	for (const id of ids) expect((await waitForAnalysis(world.token, id)).status).toBe('done');
	const reviewer = await signIn(world.people.reviewer.email, PASSWORD);
	const { body } = await getJson(world.token, `/api/v1/measurements/${ids[0]}/reading`);
	const approve = await reviewer.post(
		`/projects/${world.project.slug}/measurements/${ids[0]}?/approve`,
		{ reading: body.id, comment: 'budget checked' }
	);
	expect(approve.status).toBe(303);
	browser = await openBrowser();
	page = browser.page;
	await signInWithPassword(page, world.people.viewer.email, PASSWORD);
}, 120_000);
afterAll(async () => {
	await browser?.close();
	await closeDb();
});

/** Page count of a PDF from chromium, whose page objects are written uncompressed. */
const pdfPages = (pdf: Buffer) =>
	pdf.toString('latin1').match(/\/Type\s*\/Page(?!s)/g)?.length ?? 0;

async function printedNavigation() {
	const visible = async () => ({
		main: await page.getByRole('navigation', { name: 'Main' }).isVisible(),
		project: await page.getByRole('navigation', { name: 'Project' }).isVisible(),
		toolbar: await page.getByRole('button', { name: 'Print or save as PDF' }).isVisible()
	});
	await page.emulateMedia({ media: 'screen' });
	const screen = await visible();
	await page.emulateMedia({ media: 'print' });
	const print = await visible();
	await page.emulateMedia({ media: 'screen' });
	return { screen, print };
}

describe('the reading report', () => {
	it('is linked from the reading page', async () => {
		await page.goto(`${APP_URL}/projects/${world.project.slug}/measurements/${ids[0]}`);
		await page.getByRole('link', { name: 'Printable report' }).click();
		await page.waitForURL(`${APP_URL}${readingReport(ids[0])}`);
	});

	it('shows every row of the reading’s budget, the sign-off and both cautions', async () => {
		const { body: reading } = await getJson(world.token, `/api/v1/measurements/${ids[0]}/reading`);
		await page.goto(APP_URL + readingReport(ids[0]));
		const budget = page.getByTestId('budget');
		const rows = budget.locator('tbody tr');
		expect(await rows.count()).toBe(reading.budget.length);
		for (const [i, row] of reading.budget.entries())
			expect(await rows.nth(i).locator('td').first().innerText()).toBe(row.label);
		expect(await page.getByTestId('temperature').innerText()).toMatch(/K ± [\d.]+ K\s*\(k = 2\)/);
		expect(await page.getByTestId('temperature').innerText()).toContain('°C');
		const signOff = await page.getByTestId('sign-off').innerText();
		expect(signOff).toContain('Approved');
		expect(signOff).toContain(`reviewer ${world.project.slug}`);
		expect(signOff).toContain('budget checked');
		const cautions = await page.getByTestId('cautions').innerText();
		expect(cautions).toMatch(/Laser safety/);
		expect(cautions).toMatch(/Class 3B or 4/);
		expect(cautions).toMatch(/Not for safety decisions/);
		expect(cautions).toMatch(/accredited method/);
		expect(await page.getByTestId('method').innerText()).toContain('No profile');
	});

	it('says so when a reading is not signed off', async () => {
		await page.goto(APP_URL + readingReport(ids[1]));
		expect(await page.getByTestId('sign-off').innerText()).toContain('Not signed off');
	});

	it('prints without the navigation, on pages of its own for each part', async () => {
		await page.goto(APP_URL + readingReport(ids[0]));
		// The spectra are drawn once as a still SVG picture before the page is printed.
		const picture = page.getByTestId('spectra-picture');
		await picture.waitFor({ timeout: 15_000 });
		expect(await picture.getAttribute('src')).toMatch(/^data:image\/svg\+xml/);
		const nav = await printedNavigation();
		expect(nav.screen).toEqual({ main: true, project: true, toolbar: true });
		expect(nav.print).toEqual({ main: false, project: false, toolbar: false });
		const pdf = await page.pdf({ format: 'A4', preferCSSPageSize: true });
		expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
		// Facts, spectra and budget each begin a page (break-before-page).
		expect(pdfPages(pdf)).toBeGreaterThanOrEqual(3);
	});
});

describe('the series report', () => {
	it('is linked from the series page', async () => {
		await page.goto(
			`${APP_URL}/projects/${world.project.slug}/series/${encodeURIComponent(SERIES)}`
		);
		await page.getByRole('link', { name: 'Printable report' }).click();
		await page.waitForURL(`${APP_URL}${seriesReport()}`);
	});

	it('gives the control-chart figures, every reading with its sign-off, and the cautions', async () => {
		await page.goto(APP_URL + seriesReport());
		const figures = await page.getByTestId('figures').innerText();
		expect(figures).toMatch(/control chart/i);
		expect(figures).toMatch(/Control limits \(±3σ̂\)\s*-?[\d.]+ – [\d.]+ K/);
		expect(figures).toMatch(/Rule violations/);
		const rows = page.getByTestId('readings').locator('tbody tr');
		expect(await rows.count()).toBe(3);
		expect(await rows.nth(0).innerText()).toContain('R1-1');
		expect(await rows.nth(0).innerText()).toContain('approved');
		expect(await rows.nth(1).innerText()).toContain('not signed off');
		const cautions = await page.getByTestId('cautions').innerText();
		expect(cautions).toMatch(/Laser safety/);
		expect(cautions).toMatch(/accredited method/);
	});

	it('prints without the navigation', async () => {
		await page.goto(APP_URL + seriesReport());
		const picture = page.getByTestId('series-picture');
		await picture.waitFor({ timeout: 15_000 });
		expect(await picture.getAttribute('src')).toMatch(/^data:image\/svg\+xml/);
		const nav = await printedNavigation();
		expect(nav.print).toEqual({ main: false, project: false, toolbar: false });
		const pdf = await page.pdf({ format: 'A4', preferCSSPageSize: true });
		expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
	});
});

describe('who may open a report', () => {
	it('is not found for someone outside the project, and asks the signed-out to sign in', async () => {
		const outsider = await signIn(world.people.outsider.email, PASSWORD);
		expect((await outsider.get(readingReport(ids[0]))).status).toBe(404);
		expect((await outsider.get(seriesReport())).status).toBe(404);
		const anonymous = await fetch(APP_URL + readingReport(ids[0]), { redirect: 'manual' });
		expect(anonymous.status).toBe(303);
		expect(anonymous.headers.get('location')).toMatch(/^\/signin/);
	});
});
