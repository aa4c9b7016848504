// Browser journeys of the service shell, in Debian's chromium: each demo role signs in, an
// invitation is walked through the developer mailbox, single sign-on through the local issuer,
// and a token made and revoked on the page is tried on the API over HTTP.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { SSO_ACCOUNTS } from '../../scripts/services/sso-accounts';
import { closeDb } from '../../src/lib/server/db';
import { DEMO_ACCOUNTS, DEMO_PROJECT_SLUG } from '../../src/lib/server/seed/demo';
import { openBrowser, signInWithPassword } from '../support/browser';
import { APP_URL } from '../support/http';

let browser: Awaited<ReturnType<typeof openBrowser>>;
let page: Page;
const outside: string[] = [];

beforeAll(async () => {
	browser = await openBrowser();
	page = browser.page;
	page.on('request', (r) => {
		const host = new URL(r.url()).hostname;
		if (!['127.0.0.1', 'localhost'].includes(host) && !r.url().startsWith('data:'))
			outside.push(r.url());
	});
});
afterAll(async () => {
	await browser?.close();
	await closeDb();
});

async function signOut() {
	await page.getByRole('button', { name: 'Sign out' }).click();
	await page.waitForURL(/\/signin\?signedOut=1/);
}

describe('demo accounts', () => {
	for (const account of DEMO_ACCOUNTS) {
		it(`signs in as the ${account.role} and sees the role in the demo project`, async () => {
			await signInWithPassword(page, account.email, account.password);
			await page.getByRole('link', { name: /Thin-film hot spots/ }).click();
			await expect.poll(() => page.textContent('body')).toContain(`your role: ${account.role}`);
			const tokensTab = page.getByRole('link', { name: 'Acquisition tokens' });
			expect(await tokensTab.count()).toBe(account.role === 'owner' ? 1 : 0);
			await signOut();
		});
	}

	it('shows the generic message for a wrong password, next to the field', async () => {
		await page.goto(`${APP_URL}/signin`);
		await page.getByLabel('E-mail').fill(DEMO_ACCOUNTS[0].email);
		await page.getByLabel('Password').fill('definitely-wrong');
		await page.getByRole('button', { name: 'Sign in', exact: true }).click();
		await expect
			.poll(() => page.locator('#signin-error').textContent())
			.toBe('That e-mail and password do not match an account.');
	});
});

describe('invitation through the mail catcher', () => {
	it('owner invites, the invitee opens the mail in the dev mailbox and joins', async () => {
		const owner = DEMO_ACCOUNTS.find((a) => a.role === 'owner')!;
		const invitee = `noor.haddad.${Date.now()}@halvorsen.example`;
		await signInWithPassword(page, owner.email, owner.password);
		await page.goto(`${APP_URL}/projects/${DEMO_PROJECT_SLUG}/members`);
		await page.getByLabel('E-mail').fill(invitee);
		await page.locator('#invite-role').selectOption('viewer');
		await page.getByRole('button', { name: 'Send invitation' }).click();
		await expect.poll(() => page.textContent('body')).toContain(`Invitation sent to ${invitee}`);
		await signOut();

		await page.goto(`${APP_URL}/dev/mailbox`);
		await page
			.getByRole('link', { name: /invited you/ })
			.first()
			.click();
		await expect
			.poll(() => page.getByTestId('mail-body').textContent())
			.toContain('Accept the invitation');
		const body = (await page.getByTestId('mail-body').textContent()) ?? '';
		expect(body).toContain('as viewer');
		await page.locator('[data-testid=mail-body] a[href*="/invite/"]').first().click();
		await page.getByLabel('Your name').fill('Noor Haddad');
		await page.getByLabel('Password', { exact: true }).fill('haddad-joins-26');
		await page.getByLabel('Repeat the password').fill('haddad-joins-26');
		await page.getByRole('button', { name: 'Create the account and join' }).click();
		await page.waitForURL(/\/signin\?joined=/);

		await signInWithPassword(page, invitee, 'haddad-joins-26');
		await expect.poll(() => page.textContent('body')).toContain('Thin-film hot spots');
		await signOut();
	});
});

describe('single sign-on', () => {
	it('signs in through the institute issuer and lands in the seeded project', async () => {
		const mira = SSO_ACCOUNTS.find((a) => a.email.startsWith('mira.'))!;
		await page.goto(`${APP_URL}/signin`);
		await page.getByRole('button', { name: /Sign in with/ }).click();
		await page.getByLabel('Email').fill(mira.email);
		await page.getByLabel('Password').fill(mira.password);
		await page.getByRole('button', { name: 'Sign in' }).click();
		await page.waitForURL(`${APP_URL}/projects`);
		await expect.poll(() => page.textContent('header')).toContain(mira.name);
		await page.getByRole('link', { name: /Thin-film hot spots/ }).click();
		await expect.poll(() => page.textContent('body')).toContain('your role: reviewer');
		await signOut();
	});
});

describe('acquisition tokens', () => {
	it('an owner creates a token on the page, whoami accepts it, and after revoking refuses it', async () => {
		const owner = DEMO_ACCOUNTS.find((a) => a.role === 'owner')!;
		await signInWithPassword(page, owner.email, owner.password);
		await page.goto(`${APP_URL}/projects/${DEMO_PROJECT_SLUG}/tokens`);
		const name = `Raman bench ${Date.now()}`;
		await page.getByLabel('For which instrument or PC').fill(name);
		await page.getByRole('button', { name: 'Create token' }).click();
		const secret = (await page.getByTestId('new-token').textContent())!.trim();
		expect(secret).toMatch(/^pt_/);

		const whoami = () =>
			fetch(`${APP_URL}/api/v1/whoami`, { headers: { authorization: `Bearer ${secret}` } });
		const ok = await whoami();
		expect(ok.status).toBe(200);
		expect((await ok.json()).project.slug).toBe(DEMO_PROJECT_SLUG);

		await page.getByRole('button', { name: `Revoke ${name}` }).click();
		await expect.poll(async () => (await whoami()).status).toBe(401);
		await page.reload();
		await expect.poll(() => page.textContent('body')).toContain('revoked');
		await signOut();
	});

	it('loaded nothing from outside this server', () => {
		expect(outside).toEqual([]);
	});
});
