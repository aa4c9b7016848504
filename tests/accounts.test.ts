// Sign-in, password reset and invitations over HTTP, with the mail read from the local catcher.
import { eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, db } from '../src/lib/server/db';
import { auditLog, emailLinks, memberships, users } from '../src/lib/server/db/schema';
import { APP_URL, linkIn, Session, signIn, waitForMail } from './support/http';
import { makeWorld, PASSWORD, type World } from './support/world';

let world: World;
beforeAll(async () => {
	world = await makeWorld('accounts');
});
afterAll(closeDb);

const pathOf = (url: string) => new URL(url).pathname;

async function signInAttempt(email: string, password: string) {
	const response = await new Session().post('/signin', {
		providerId: 'credentials',
		email,
		password,
		redirectTo: '/projects'
	});
	return { status: response.status, html: await response.text() };
}

describe('sign-in', () => {
	it('gives one generic message for a wrong password and for an unknown address', async () => {
		const wrong = await signInAttempt(world.people.viewer.email, 'not-the-password');
		const unknown = await signInAttempt('nobody.at.all@test.example', 'not-the-password');
		for (const attempt of [wrong, unknown]) {
			expect(attempt.status).toBe(400);
			expect(attempt.html).toContain('That e-mail and password do not match an account.');
		}
	});

	it('signs in with the right password and out again', async () => {
		const session = await signIn(world.people.viewer.email, PASSWORD);
		expect((await session.get('/projects')).status).toBe(200);
		const out = await session.post('/signout', { redirectTo: '/signin?signedOut=1' });
		expect(out.status).toBeLessThan(400);
		const after = await session.get('/projects');
		expect(after.status).toBe(303);
	});
});

describe('password reset by e-mail link', () => {
	it('resets once, and the used link is refused afterwards', async () => {
		const email = world.people.analyst.email;
		const started = Date.now();
		const ask = await new Session().post('/forgot', { email });
		expect(ask.status).toBe(200);
		const mail = await waitForMail(email, started);
		const link = pathOf(linkIn(mail.text, '/reset'));

		const visitor = new Session();
		expect((await visitor.get(link)).status).toBe(200);
		const set = await visitor.post(link, {
			password: 'a-brand-new-secret',
			confirm: 'a-brand-new-secret'
		});
		expect(set.status).toBe(303);
		await signIn(email, 'a-brand-new-secret');
		await expect(signIn(email, PASSWORD)).rejects.toThrow();

		expect((await visitor.get(link)).status).toBe(410);
		const again = await visitor.post(link, {
			password: 'yet-another-one!',
			confirm: 'yet-another-one!'
		});
		expect(again.status).toBe(410);
	});

	it('answers an unknown address exactly as a known one', async () => {
		const response = await new Session().post('/forgot', { email: 'unknown.person@test.example' });
		expect(response.status).toBe(200);
		expect(await response.text()).toContain('If');
	});

	it('refuses an expired link with 410', async () => {
		const email = world.people.reviewer.email;
		const started = Date.now();
		await new Session().post('/forgot', { email });
		const link = pathOf(linkIn((await waitForMail(email, started)).text, '/reset'));
		await db
			.update(emailLinks)
			.set({ expiresAt: new Date(Date.now() - 1000) })
			.where(eq(emailLinks.email, email));
		const response = await new Session().get(link);
		expect(response.status).toBe(410);
		expect(await response.text()).toContain('expired');
	});

	it('refuses a malformed link with 410, not a 500', async () => {
		expect((await new Session().get('/reset/garbage')).status).toBe(410);
	});
});

describe('invitations', () => {
	it('an owner invites by e-mail; the link creates the account with the role, once', async () => {
		const owner = await signIn(world.people.owner.email, PASSWORD);
		const invitee = `invitee.${Date.now()}@test.example`;
		const started = Date.now();
		const sent = await owner.post(`/projects/${world.project.slug}/members?/invite`, {
			email: invitee,
			role: 'reviewer'
		});
		expect(sent.status).toBe(200);
		const mail = await waitForMail(invitee, started);
		expect(mail.subject).toContain(world.project.name);
		const link = pathOf(linkIn(mail.text, '/invite'));

		const visitor = new Session();
		expect((await visitor.get(link)).status).toBe(200);
		const accept = await visitor.post(`${link}?/create`, {
			name: 'Ines Invited',
			password: 'invited-secret-1',
			confirm: 'invited-secret-1'
		});
		expect(accept.status).toBe(303);

		const user = await db.query.users.findFirst({ where: eq(users.email, invitee) });
		expect(user?.name).toBe('Ines Invited');
		const membership = await db.query.memberships.findFirst({
			where: eq(memberships.userId, user!.id)
		});
		expect(membership?.role).toBe('reviewer');
		const session = await signIn(invitee, 'invited-secret-1');
		expect((await session.get(`/projects/${world.project.slug}`)).status).toBe(200);

		expect((await visitor.get(link)).status).toBe(410);
	});

	it('validates the new account form next to each field', async () => {
		const owner = await signIn(world.people.owner.email, PASSWORD);
		const invitee = `short.${Date.now()}@test.example`;
		const started = Date.now();
		await owner.post(`/projects/${world.project.slug}/members?/invite`, {
			email: invitee,
			role: 'viewer'
		});
		const link = pathOf(linkIn((await waitForMail(invitee, started)).text, '/invite'));
		const response = await new Session().post(`${link}?/create`, {
			name: '',
			password: 'short',
			confirm: 'x'
		});
		expect(response.status).toBe(400);
		const html = await response.text();
		expect(html).toContain('Enter your name.');
		expect(html).toContain('Use at least 10 characters.');
	});
});

describe('audit log', () => {
	it('records member and token changes, and the database refuses to rewrite it', async () => {
		const rows = await db.select().from(auditLog).where(eq(auditLog.projectId, world.project.id));
		expect(rows.map((r) => r.action)).toContain('token.create');
		const refusal = (query: Promise<unknown>) =>
			query.then(
				() => 'accepted',
				(err: Error & { cause?: Error }) => (err.cause ?? err).message
			);
		expect(
			await refusal(
				db.execute(sql`update audit_log set action = 'edited' where id = ${rows[0].id}`)
			)
		).toMatch(/append-only/);
		expect(await refusal(db.execute(sql`delete from audit_log where id = ${rows[0].id}`))).toMatch(
			/append-only/
		);
	});
});

describe('health', () => {
	it('reports database, storage, mail and queue up', async () => {
		const response = await fetch(`${APP_URL}/healthz`);
		expect(response.status).toBe(200);
		expect(await response.json()).toEqual({
			status: 'up',
			database: 'up',
			storage: 'up',
			mail: 'up',
			queue: 'up'
		});
	});
});
