// A reviewer's path in Debian's chromium: from the review queue to a reading, approved there,
// and the reading shown as approved and gone from the queue. The demo reviewer reviews a fresh
// project of its own here, so the demo project's queue is left as it is.
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { closeDb, db } from '../../src/lib/server/db';
import { memberships, users } from '../../src/lib/server/db/schema';
import { openBrowser, signInWithPassword } from '../support/browser';
import { APP_URL } from '../support/http';
import { FIXTURE_PAIRS, fixture, postMeasurement, waitForAnalysis } from '../support/pairs';
import { makeWorld, type World } from '../support/world';

const REVIEWER = { email: 'tomas.berg@halvorsen.example', password: 'berg-reviewer-26' };

let browser: Awaited<ReturnType<typeof openBrowser>>;
let page: Page;
let world: World;
const label = `queue walk ${Date.now()}`;
let measurementId = '';

beforeAll(async () => {
	world = await makeWorld('review-browser');
	const [tomas] = await db.select().from(users).where(eq(users.email, REVIEWER.email));
	await db
		.insert(memberships)
		.values({ projectId: world.project.id, userId: tomas.id, role: 'reviewer' });
	const pair = FIXTURE_PAIRS[0];
	const parts = Object.fromEntries(
		Object.entries(pair.files).map(([part, name]) => [part, fixture(name)])
	);
	const response = await postMeasurement(world.token, parts, {
		...pair.metadata,
		c_factor: 1,
		u_c_factor: 0.02,
		label
	});
	expect(response.status).toBe(202);
	measurementId = ((await response.json()) as { id: string }).id;
	expect((await waitForAnalysis(world.token, measurementId)).status).toBe('done');
	browser = await openBrowser();
	page = browser.page;
}, 90_000);
afterAll(async () => {
	await browser?.close();
	await closeDb();
});

describe('a reviewer clears a reading from the queue', () => {
	it('walks from /review to the reading, approves it and sees it approved', async () => {
		await signInWithPassword(page, REVIEWER.email, REVIEWER.password);
		await page
			.getByRole('link', { name: /Review/ })
			.first()
			.click();
		await page.waitForURL(`${APP_URL}/review`);
		await page.locator('#q-project').selectOption(world.project.slug);
		await page.getByRole('button', { name: 'Filter' }).click();
		await page.waitForURL(/project=/);
		await page.getByRole('link', { name: label }).click();
		await page.waitForURL(new RegExp(`/measurements/${measurementId}`));
		await expect.poll(() => page.textContent('body')).toContain("Awaiting a reviewer's sign-off");

		await page.getByLabel('Comment').fill('Budget and flags checked.');
		await page.getByRole('button', { name: 'Approve' }).click();
		await expect.poll(() => page.textContent('body')).toContain('Approved — locked');
		const body = (await page.textContent('body')) ?? '';
		expect(body).toContain('Budget and flags checked.');
		expect(body).toContain('Tomás Berg');
		expect(await page.getByRole('button', { name: 'Approve' }).count()).toBe(0);
		await expect
			.poll(() => page.getByTestId('audit-history').textContent())
			.toContain('approved a reading');

		await page.goto(`${APP_URL}/review?project=${world.project.slug}`);
		await expect.poll(() => page.textContent('body')).toContain('Nothing matches these filters.');
		expect(await page.getByRole('link', { name: label }).count()).toBe(0);
	}, 60_000);
});
