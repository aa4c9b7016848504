// An approved reading is locked (issue 7 item 2): no page, form action or API route changes it
// or its sign-off, re-analysis adds a new reading beside it, and the database itself refuses a
// direct rewrite. The routes tried are every mutating one that could reach a reading, found by
// a grep for `actions` and POST/PUT/PATCH/DELETE handlers under src/routes.
import { and, asc, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, db } from '../src/lib/server/db';
import { measurements, readings, signOffs } from '../src/lib/server/db/schema';
import { APP_URL, signIn, type Session } from './support/http';
import {
	fixture,
	FIXTURE_PAIRS,
	measureSi532,
	postMeasurement,
	waitForAnalysis
} from './support/pairs';
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
			['owner', `${page(B)}?/return`, { reading: A.reading, comment: 'sideways' }, 404],
			['reviewer', `${page(B)}?/approve`, { reading: A.reading }, 404],
			['reviewer', `${page(A)}?/approve`, { reading: B.reading }, 404]
		];
		for (const [who, path, fields, status] of tries) {
			const response = await s[who].post(path, fields);
			expect(`${who} ${path} → ${response.status}`).toBe(`${who} ${path} → ${status}`);
		}
		expect(await db.select().from(signOffs).where(eq(signOffs.readingId, B.reading))).toEqual([]);
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
			'/api/v1/readings.csv',
			'/api/v1/profiles',
			`/api/v1/series/locked-${A.id}`
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
		// The collections' POSTs make a measurement or a series: a body that is neither is refused.
		for (const path of ['/api/v1/measurements', '/api/v1/series']) {
			expect((await api('POST', path, body)).status, path).toBeGreaterThanOrEqual(400);
		}
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

describe('an approved reading made with a profile’s calibration', () => {
	it('is not changed when the profile is edited or the calibration retired', async () => {
		const owner = s.owner;
		const base = `/projects/${world.project.slug}`;
		const profile = {
			name: 'Locked bench',
			laser_nm: '532',
			detector: 'photon-counting',
			filter_cutoff_cm1: '90',
			optics_notes: '',
			notes: ''
		};
		const created = await owner.post(`${base}/instruments?/create`, profile);
		expect(created.status).toBe(303);
		const path = created.headers.get('location')!;
		const added = await owner.post(`${path}?/addConstant`, {
			c: '1',
			u_c: '0.02',
			source: 'test certificate'
		});
		expect(added.status).toBeLessThan(400);
		const { laser_nm: _laser, ...band } = FIXTURE_PAIRS[0].metadata;
		const parts = Object.fromEntries(
			Object.entries(FIXTURE_PAIRS[0].files).map(([part, name]) => [part, fixture(name)])
		);
		const response = await postMeasurement(world.token, parts, {
			...band,
			profile: 'Locked bench',
			label: 'locked P'
		});
		expect(response.status).toBe(202);
		const id = ((await response.json()) as { id: string }).id;
		const done = await waitForAnalysis(world.token, id);
		expect(done.status).toBe('done');
		const P = { id, reading: done.reading.id as string };
		expect((await s.reviewer.post(`${page(P)}?/approve`, { reading: P.reading })).status).toBe(303);
		const rowOf = async () => {
			const [row] = await db.select().from(readings).where(eq(readings.id, P.reading));
			const decisions = await db.select().from(signOffs).where(eq(signOffs.readingId, P.reading));
			const json = JSON.parse(
				await (await s.viewer.get(`${page(P)}/reading.json?reading=${P.reading}`)).text()
			);
			return { row: JSON.stringify(row), decisions: JSON.stringify(decisions), json };
		};
		const before = await rowOf();
		expect(before.json.calibration).not.toBeNull();

		const edited = await owner.post(`${path}?/edit`, { ...profile, laser_nm: '532.1' });
		expect(edited.status).toBe(303);
		const html = await (await owner.get(path)).text();
		for (const [, cal] of html.matchAll(/id="calibration-(\d+)"/g)) {
			expect((await owner.post(`${path}?/retire`, { id: cal })).status).toBeLessThan(400);
		}
		const after = await rowOf();
		expect(after.row).toBe(before.row);
		expect(after.decisions).toBe(before.decisions);
		// The calibration's own state is shown as it is now (it was retired after the sign-off);
		// everything the reading itself says stays as it was.
		expect(after.json.calibration.status).toBe('retired');
		const { status: _was, ...calibrationBefore } = before.json.calibration;
		const { status: _now, ...calibrationAfter } = after.json.calibration;
		expect({ ...after.json, calibration: calibrationAfter }).toEqual({
			...before.json,
			calibration: calibrationBefore
		});
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
