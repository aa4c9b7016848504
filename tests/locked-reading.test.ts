// An approved reading is locked (issue 7 item 2): no page, form action or API route changes it
// or its sign-off, re-analysis adds a new reading beside it, and the database itself refuses a
// direct rewrite. The routes tried are every mutating one that could reach a reading, found by
// a grep for `actions` and POST/PUT/PATCH/DELETE handlers under src/routes.
import { and, asc, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, db } from '../src/lib/server/db';
import { measurements, readings, signOffs } from '../src/lib/server/db/schema';
import { APP_URL, signIn, type Session } from './support/http';
import { measureSi532, waitForAnalysis } from './support/pairs';
import { makeWorld, PASSWORD, type World } from './support/world';

let world: World;
let s: Record<'viewer' | 'analyst' | 'reviewer' | 'owner' | 'outsider', Session>;
/** A is approved; B is another measurement of the same project. */
const A = { id: '', reading: '' };
const B = { id: '', reading: '' };

const page = (m: { id: string }) => `/projects/${world.project.slug}/measurements/${m.id}`;

/** Everything a person or a machine can read about A's approved reading, as bytes. */
async function snapshot() {
	const [row] = await db.select().from(readings).where(eq(readings.id, A.reading));
	const decisions = await db
		.select()
		.from(signOffs)
		.where(eq(signOffs.readingId, A.reading))
		.orderBy(asc(signOffs.id));
	const file = await s.viewer.get(`${page(A)}/reading.json?reading=${A.reading}`);
	expect(file.status).toBe(200);
	return {
		row: JSON.stringify(row),
		decisions: JSON.stringify(decisions),
		json: await file.text()
	};
}

const api = (method: string, path: string, body?: string) =>
	fetch(`${APP_URL}${path}`, {
		method,
		headers: { authorization: `Bearer ${world.token}`, 'content-type': 'application/json' },
		body
	});
const apiReading = async () => (await api('GET', `/api/v1/measurements/${A.id}/reading`)).text();

const refusal = (query: Promise<unknown>) =>
	query.then(
		() => 'accepted',
		(err: Error & { cause?: Error }) => (err.cause ?? err).message
	);

beforeAll(async () => {
	world = await makeWorld('locked');
	const roles = ['viewer', 'analyst', 'reviewer', 'owner', 'outsider'] as const;
	const [sessions, a, b] = await Promise.all([
		Promise.all(roles.map((r) => signIn(world.people[r].email, PASSWORD))),
		measureSi532(world.token, 'locked A'),
		measureSi532(world.token, 'locked B')
	]);
	s = Object.fromEntries(roles.map((r, i) => [r, sessions[i]])) as typeof s;
	Object.assign(A, a);
	Object.assign(B, b);
	const approved = await s.reviewer.post(`${page(A)}?/approve`, {
		reading: A.reading,
		comment: 'Budget checked against the calibration record.'
	});
	expect(approved.status).toBe(303);
}, 90_000);
afterAll(closeDb);

describe('an approved reading', () => {
	it('is not changed by any page action, whoever sends it', async () => {
		const before = await snapshot();
		const apiBefore = await apiReading();
		const tries: [keyof typeof s, string, Record<string, string>, number][] = [
			['viewer', `${page(A)}?/approve`, { reading: A.reading }, 403],
			['viewer', `${page(A)}?/return`, { reading: A.reading, comment: 'x' }, 403],
			['analyst', `${page(A)}?/approve`, { reading: A.reading }, 403],
			['analyst', `${page(A)}?/return`, { reading: A.reading, comment: 'x' }, 403],
			['reviewer', `${page(A)}?/approve`, { reading: A.reading, comment: 'again' }, 409],
			['reviewer', `${page(A)}?/return`, { reading: A.reading, comment: 'undo' }, 409],
			['owner', `${page(A)}?/return`, { reading: A.reading, comment: 'overrule' }, 409],
			['outsider', `${page(A)}?/return`, { reading: A.reading, comment: 'x' }, 404],
			['outsider', `${page(A)}?/reanalyse`, { lineshape: 'gaussian' }, 404],
			['viewer', `${page(A)}?/reanalyse`, { lineshape: 'gaussian' }, 403],
			// The reading addressed through another measurement's page.
			['owner', `${page(B)}?/return`, { reading: A.reading, comment: 'sideways' }, 409]
		];
		for (const [who, path, fields, status] of tries) {
			const response = await s[who].post(path, fields);
			expect(`${who} ${path} → ${response.status}`).toBe(`${who} ${path} → ${status}`);
		}
		// The project's settings: sign-off switched off and on again leaves the decision alone.
		const settings = `/projects/${world.project.slug}/settings?/save`;
		const fields = { name: world.project.name, description: '' };
		expect((await s.owner.post(settings, fields)).status).toBeLessThan(400);
		expect(
			(await s.owner.post(settings, { ...fields, signOffRequired: 'on' })).status
		).toBeLessThan(400);
		expect(await snapshot()).toEqual(before);
		expect(await apiReading()).toBe(apiBefore);
	});

	it('is not changed by any API method on any API route', async () => {
		const before = await snapshot();
		const apiBefore = await apiReading();
		const body = JSON.stringify({ temperature_k: 1, decision: 'returned', c_factor: 2 });
		const routes = [
			`/api/v1/measurements/${A.id}`,
			`/api/v1/measurements/${A.id}/reading`,
			`/api/v1/measurements/${A.id}/reading/${A.reading}`,
			`/api/v1/readings/${A.reading}`,
			'/api/v1/readings.csv'
		];
		for (const path of routes) {
			for (const method of ['POST', 'PUT', 'PATCH', 'DELETE']) {
				const response = await api(method, path, body);
				expect(response.status, `${method} ${path}`).toBeGreaterThanOrEqual(400);
				expect(response.status, `${method} ${path}`).toBeLessThan(500);
				// RFC 9457 under /api, also for a method the route does not offer.
				expect(response.headers.get('content-type'), `${method} ${path}`).toMatch(
					/^application\/problem\+json/
				);
			}
		}
		// The collection's POST is the upload: a body that is not a measurement is refused.
		expect((await api('POST', '/api/v1/measurements', body)).status).toBeGreaterThanOrEqual(400);
		expect(await snapshot()).toEqual(before);
		expect(await apiReading()).toBe(apiBefore);
	});

	it('stays approved beside the new reading a re-analysis makes, which needs its own sign-off', async () => {
		const before = await snapshot();
		const response = await s.analyst.post(`${page(A)}?/reanalyse`, {
			lineshape: 'gaussian',
			coverage_factor: '3'
		});
		expect(response.status).toBe(303);
		const done = await waitForAnalysis(world.token, A.id);
		expect(done.status).toBe('done');
		const newer = done.reading.id as string;
		expect(newer).not.toBe(A.reading);
		expect(await snapshot()).toEqual(before);
		expect(await db.select().from(signOffs).where(eq(signOffs.readingId, newer))).toEqual([]);
		const old = await (await s.viewer.get(`${page(A)}?reading=${A.reading}`)).text();
		expect(old).toContain('Approved — locked');
		const fresh = await (await s.viewer.get(page(A))).text();
		expect(fresh).toContain('Awaiting a reviewer');
		expect(fresh).not.toContain('Approved — locked');
		expect(JSON.parse(await apiReading()).id).toBe(newer);
	}, 60_000);
});

describe('the database', () => {
	it('refuses to rewrite or remove a reading or an approved sign-off', async () => {
		const before = await snapshot();
		const tries = [
			sql`update readings set temperature_k = 1 where id = ${A.reading}`,
			sql`update readings set result = '{}'::jsonb where id = ${A.reading}`,
			sql`delete from readings where id = ${A.reading}`
		];
		for (const q of tries) expect(await refusal(db.execute(q))).toMatch(/only added/);
		for (const q of [
			sql`update sign_offs set decision = 'returned', comment = 'x' where reading_id = ${A.reading}`,
			sql`delete from sign_offs where reading_id = ${A.reading}`
		]) {
			expect(await refusal(db.execute(q))).toMatch(/approved sign-off is final/);
		}
		// A reading that was never approved is evidence too.
		expect(
			await refusal(db.execute(sql`update readings set flag_codes = '{}' where id = ${B.reading}`))
		).toMatch(/only added/);
		expect(await snapshot()).toEqual(before);
	});

	it('still lets a whole measurement go, with its approved reading and sign-off', async () => {
		const c = await measureSi532(world.token, 'locked C');
		const reviewer = await s.reviewer.post(`${page(c)}?/approve`, { reading: c.reading });
		expect(reviewer.status).toBe(303);
		await db.delete(measurements).where(eq(measurements.id, c.id));
		expect(await db.select().from(readings).where(eq(readings.measurementId, c.id))).toEqual([]);
		expect(
			await db
				.select()
				.from(signOffs)
				.where(and(eq(signOffs.readingId, c.reading), eq(signOffs.decision, 'approved')))
		).toEqual([]);
	}, 60_000);
});
