// Review and sign-off (issue 7), over HTTP against the running app: measurements go in through
// the API, the worker reads them, and people of each role try to approve or return the readings.
import { and, asc, eq, inArray } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, db } from '../src/lib/server/db';
import { auditLog, projects, readings, signOffs } from '../src/lib/server/db/schema';
import { readingResponse } from '../src/lib/server/openapi';
import { signIn, waitForMail, type Session } from './support/http';
import {
	fixture,
	FIXTURE_PAIRS,
	getJson,
	measureSi532,
	postMeasurement,
	waitForAnalysis
} from './support/pairs';
import { makeWorld, PASSWORD, type World } from './support/world';

let world: World;
let s: Record<'viewer' | 'analyst' | 'reviewer' | 'owner' | 'outsider', Session>;
/** Measurement A is approved in these tests, B is returned. */
const A = { id: '', reading: '' };
const B = { id: '', reading: '' };

const pair = FIXTURE_PAIRS[0];
const page = (m: { id: string }) => `/projects/${world.project.slug}/measurements/${m.id}`;

const measure = (label: string) => measureSi532(world.token, label);

const auditFor = (readingId: string, action: string) =>
	db
		.select()
		.from(auditLog)
		.where(and(eq(auditLog.objectId, readingId), eq(auditLog.action, action)));

const queue = async (who: Session) =>
	(await who.get(`/review?project=${world.project.slug}`)).text();

beforeAll(async () => {
	world = await makeWorld('review');
	const roles = ['viewer', 'analyst', 'reviewer', 'owner', 'outsider'] as const;
	const [sessions, a, b] = await Promise.all([
		Promise.all(roles.map((r) => signIn(world.people[r].email, PASSWORD))),
		measure('review A'),
		measure('review B')
	]);
	s = Object.fromEntries(roles.map((r, i) => [r, sessions[i]])) as typeof s;
	Object.assign(A, a);
	Object.assign(B, b);
}, 90_000);
afterAll(closeDb);

describe('who may sign off', () => {
	it('refuses a viewer and an analyst (403) and hides the project from an outsider (404)', async () => {
		for (const who of ['viewer', 'analyst'] as const) {
			const approve = await s[who].post(`${page(A)}?/approve`, { reading: A.reading });
			expect(approve.status).toBe(403);
			const back = await s[who].post(`${page(A)}?/return`, { reading: A.reading, comment: 'x' });
			expect(back.status).toBe(403);
		}
		const outsider = await s.outsider.post(`${page(A)}?/approve`, { reading: A.reading });
		expect(outsider.status).toBe(404);
		expect(await db.select().from(signOffs).where(eq(signOffs.readingId, A.reading))).toEqual([]);
	});

	it('shows the sign-off forms to a reviewer and not to an analyst', async () => {
		expect(await (await s.reviewer.get(page(A))).text()).toContain('?/approve');
		expect(await (await s.analyst.get(page(A))).text()).not.toContain('?/approve');
	});
});

describe('the queue', () => {
	it('lists done readings, oldest first, with the count on the navigation', async () => {
		const html = await queue(s.reviewer);
		expect(html).toContain(`?reading=${A.reading}`);
		expect(html).toContain(`?reading=${B.reading}`);
		// Ordered by the database, which keeps microseconds: the two readings may share a millisecond.
		const [first, second] = await db
			.select()
			.from(readings)
			.where(inArray(readings.id, [A.reading, B.reading]))
			.orderBy(asc(readings.createdAt), asc(readings.id));
		expect(html.indexOf(`?reading=${first.id}`)).toBeLessThan(
			html.indexOf(`?reading=${second.id}`)
		);
		const nav = async (who: Session) => (await who.get('/projects')).text();
		const count = /href="\/review"[^]*?aria-label="(\d+) awaiting sign-off"/.exec(
			await nav(s.reviewer)
		);
		expect(Number(count?.[1])).toBeGreaterThanOrEqual(2);
		expect(await nav(s.analyst)).not.toContain('href="/review"');
		// An analyst signs off nowhere: no queue link for them, and an empty queue if they go there.
		const analyst = await queue(s.analyst);
		expect(analyst).not.toContain(`?reading=${A.reading}`);
	});

	it('filters by flag severity and age from the address', async () => {
		expect(await queue(s.reviewer)).toContain(A.reading);
		const old = await (await s.reviewer.get(`/review?project=${world.project.slug}&age=7`)).text();
		expect(old).not.toContain(A.reading);
		const errors = await (
			await s.reviewer.get(`/review?project=${world.project.slug}&severity=error`)
		).text();
		expect(errors).not.toContain(A.reading);
	});
});

describe('returning a reading', () => {
	it('needs a comment: 400 with the message next to the field', async () => {
		const response = await s.reviewer.post(`${page(B)}?/return`, {
			reading: B.reading,
			comment: '  '
		});
		expect(response.status).toBe(400);
		expect(await response.text()).toContain('Say what the analyst should change');
		expect(await auditFor(B.reading, 'reading.return')).toHaveLength(0);
	});

	it('e-mails the analyst the comment and a link, and leaves one audit entry', async () => {
		const since = Date.now();
		const comment = `Anti-Stokes window looks clipped ${since}`;
		const response = await s.reviewer.post(`${page(B)}?/return`, { reading: B.reading, comment });
		expect(response.status).toBe(303);
		// The token that uploaded B was made by the owner, so the owner is told.
		const mail = await waitForMail(world.people.owner.email, since);
		expect(mail.text).toContain(comment);
		expect(mail.text).toContain(`${page(B)}`);
		const entries = await auditFor(B.reading, 'reading.return');
		expect(entries).toHaveLength(1);
		expect(entries[0].actorUserId).toBe(world.people.reviewer.id);
		expect(entries[0].projectId).toBe(world.project.id);
		const html = await (await s.analyst.get(page(B))).text();
		expect(html).toContain('Returned');
		expect(html).toContain(comment);
		expect(await queue(s.reviewer)).not.toContain(B.reading);
	});

	it('marks the reading returned in the measurements table (comment on hover) and in its JSON', async () => {
		const table = await (await s.viewer.get(`/projects/${world.project.slug}/measurements`)).text();
		const row = table.slice(
			table.indexOf(`${page(B)}"`),
			table.indexOf('</tr>', table.indexOf(`${page(B)}"`))
		);
		expect(row).toMatch(/title="Returned: Anti-Stokes window looks clipped \d+"/);
		expect(row).toContain('Returned');
		const [entry] = await auditFor(B.reading, 'reading.return');
		const file = await (await s.viewer.get(`${page(B)}/reading.json`)).json();
		const api = await getJson(world.token, `/api/v1/measurements/${B.id}/reading`);
		for (const body of [file, api.body]) {
			// The documented shape (openapi.ts), checked by the same schema the document is made from.
			const doc = readingResponse.parse(body);
			expect(doc.sign_off).toMatchObject({
				state: 'returned',
				reviewer: `reviewer ${world.project.slug}`,
				comment: expect.stringMatching(/^Anti-Stokes window looks clipped/)
			});
			const at = Date.parse(doc.sign_off!.decided_at!);
			expect(Math.abs(at - entry.at.getTime())).toBeLessThan(5_000);
		}
	});
});

describe('approving a reading', () => {
	it('approves once, with one audit entry, and the reading leaves the queue', async () => {
		const response = await s.reviewer.post(`${page(A)}?/approve`, {
			reading: A.reading,
			comment: 'Budget checked.'
		});
		expect(response.status).toBe(303);
		expect(await auditFor(A.reading, 'reading.approve')).toHaveLength(1);
		expect(await queue(s.reviewer)).not.toContain(A.reading);
		const html = await (await s.viewer.get(page(A))).text();
		expect(html).toContain('Approved');
		expect(html).toContain('Budget checked.');
		const table = await (await s.viewer.get(`/projects/${world.project.slug}/measurements`)).text();
		expect(table).toContain('Approved');
		const { body } = await getJson(world.token, `/api/v1/measurements/${A.id}/reading`);
		expect(readingResponse.parse(body).sign_off).toMatchObject({
			state: 'approved',
			reviewer: `reviewer ${world.project.slug}`,
			comment: 'Budget checked.',
			decisions: [expect.objectContaining({ decision: 'approved' })]
		});
	});

	it('refuses a second decision on an approved reading', async () => {
		const again = await s.owner.post(`${page(A)}?/approve`, { reading: A.reading });
		expect(again.status).toBe(409);
		expect(await again.text()).toContain('already approved');
		const back = await s.owner.post(`${page(A)}?/return`, { reading: A.reading, comment: 'No.' });
		expect(back.status).toBe(409);
		expect(await auditFor(A.reading, 'reading.approve')).toHaveLength(1);
		expect(await auditFor(A.reading, 'reading.return')).toHaveLength(0);
		const rows = await db.select().from(signOffs).where(eq(signOffs.readingId, A.reading));
		expect(rows.map((r) => r.decision)).toEqual(['approved']);
	});

	it('re-analysis makes a new reading that needs its own sign-off; the approved one stays', async () => {
		const [before] = await db.select().from(readings).where(eq(readings.id, A.reading));
		const response = await s.analyst.post(`${page(A)}?/reanalyse`, { lineshape: 'gaussian' });
		expect(response.status).toBe(303);
		let newer: typeof before | undefined;
		const deadline = Date.now() + 30_000;
		while (!newer && Date.now() < deadline) {
			const rows = await db.select().from(readings).where(eq(readings.measurementId, A.id));
			newer = rows.find((r) => r.id !== A.reading);
			if (!newer) await new Promise((r) => setTimeout(r, 250));
		}
		expect(newer).toBeDefined();
		await waitForAnalysis(world.token, A.id);
		const [after] = await db.select().from(readings).where(eq(readings.id, A.reading));
		expect(after).toEqual(before);
		const old = await (await s.viewer.get(`${page(A)}?reading=${A.reading}`)).text();
		expect(old).toContain('Approved');
		expect(await queue(s.reviewer)).toContain(`?reading=${newer!.id}`);
		const fresh = await s.reviewer.post(`${page(A)}?/approve`, { reading: newer!.id });
		expect(fresh.status).toBe(303);
		expect(await auditFor(newer!.id, 'reading.approve')).toHaveLength(1);
	}, 60_000);
});

describe('the project setting', () => {
	it('keeps readings of a project that needs no sign-off out of the queue and the navigation', async () => {
		const quiet = await makeWorld('review-off');
		await db
			.update(projects)
			.set({ signOffRequired: false })
			.where(eq(projects.id, quiet.project.id));
		const parts = Object.fromEntries(
			Object.entries(pair.files).map(([part, name]) => [part, fixture(name)])
		);
		const response = await postMeasurement(quiet.token, parts, {
			...pair.metadata,
			c_factor: 1,
			u_c_factor: 0.02,
			label: 'quiet'
		});
		const body = await response.json();
		expect(body).toHaveProperty('id');
		const id = body.id as string;
		const done = await waitForAnalysis(quiet.token, id);
		const reviewer = await signIn(quiet.people.reviewer.email, PASSWORD);
		expect(await (await reviewer.get('/projects')).text()).not.toContain('href="/review"');
		expect(await (await reviewer.get('/review')).text()).not.toContain(done.reading.id);
		const html = await (
			await reviewer.get(`/projects/${quiet.project.slug}/measurements/${id}`)
		).text();
		expect(html).not.toContain('?/approve');
	}, 60_000);
});
