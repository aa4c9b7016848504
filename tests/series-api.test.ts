// Series as entities: created by an acquisition PC through the API or by a member on the series
// page, made on the fly when an upload names a new series (with the kind its metadata suggests),
// and refused with RFC 9457 problem details for bad input, low roles and other projects.
import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, db } from '../src/lib/server/db';
import { measurements, series } from '../src/lib/server/db/schema';
import { createToken } from '../src/lib/server/tokens';
import { APP_URL, signIn } from './support/http';
import { getJson, postMeasurement, syntheticCsv, waitForAnalysis } from './support/pairs';
import { makeWorld, PASSWORD, type World } from './support/world';

let world: World;
let other: World;

beforeAll(async () => {
	[world, other] = await Promise.all([makeWorld('series-api'), makeWorld('series-api-other')]);
});
afterAll(closeDb);

const post = (token: string, body: unknown) =>
	fetch(`${APP_URL}/api/v1/series`, {
		method: 'POST',
		headers: { authorization: `Bearer ${token}`, 'content-type': 'application/json' },
		body: JSON.stringify(body)
	});

const pair = syntheticCsv({
	laserNm: 532,
	modeCm1: 520.7,
	temperatureK: 320,
	exponent: 3,
	lineshape: 'lorentzian',
	fwhmCm1: 3.5,
	stokesCounts: 1e5,
	seed: 7
});
const upload = (metadata: Record<string, unknown>) =>
	postMeasurement(
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

describe('POST /api/v1/series', () => {
	it('creates a series of each kind, listed with its kind and limits', async () => {
		for (const kind of ['batch', 'power-sweep', 'map', 'time']) {
			const response = await post(world.token, { name: `api ${kind}`, kind, baseline_size: 5 });
			expect(response.status).toBe(201);
			const body = await response.json();
			expect(body).toMatchObject({
				name: `api ${kind}`,
				kind,
				baseline_size: 5,
				lower_spec_k: null,
				upper_spec_k: null,
				measurements: 0
			});
			expect(response.headers.get('location')).toBe(body.links.self);
		}
		const { status, body } = await getJson(world.token, '/api/v1/series');
		expect(status).toBe(200);
		const kinds = Object.fromEntries(
			(body.items as { name: string; kind: string }[]).map((s) => [s.name, s.kind])
		);
		expect(kinds).toMatchObject({
			'api batch': 'batch',
			'api power-sweep': 'power-sweep',
			'api map': 'map',
			'api time': 'time'
		});
	});

	it('refuses an unknown kind with 422 problem+json naming the field', async () => {
		const response = await post(world.token, { name: 'bad kind', kind: 'histogram' });
		expect(response.status).toBe(422);
		expect(response.headers.get('content-type')).toMatch(/^application\/problem\+json/);
		const body = await response.json();
		expect(body.status).toBe(422);
		expect(body.errors.map((e: { pointer: string }) => e.pointer)).toContain('/kind');
		expect(body.detail).toMatch(/batch, power-sweep, map, time/);
	});

	it('refuses a second series of the same name (409) and spec limits from a token (403)', async () => {
		expect((await post(world.token, { name: 'api batch', kind: 'batch' })).status).toBe(409);
		const spec = await post(world.token, { name: 'spec', kind: 'batch', upper_spec_k: 500 });
		expect(spec.status).toBe(403);
		expect((await spec.json()).detail).toMatch(/owner/);
	});

	it('needs the write scope', async () => {
		const { secret } = await createToken(world.project.id, 'reader', ['measurements:read'], null);
		const response = await post(secret, { name: 'read only', kind: 'time' });
		expect(response.status).toBe(403);
		expect((await response.json()).detail).toMatch(/measurements:write/);
	});
});

describe('GET /api/v1/series/{name}', () => {
	it('is not found for another project’s token', async () => {
		const path = `/api/v1/series/${encodeURIComponent('api batch')}`;
		expect((await getJson(world.token, path)).status).toBe(200);
		const outside = await getJson(other.token, path);
		expect(outside.status).toBe(404);
		expect(outside.body.title).toBe('Not found');
	});
});

const uploaded: string[] = [];

describe('a series named by an upload', () => {
	it('is made with the kind its metadata suggests, and holds the measurement', async () => {
		const cases = [
			{ name: 'auto map', extra: { x: 10, y: 20, laser_power_mw: 5 }, kind: 'map' },
			{ name: 'auto sweep', extra: { laser_power_mw: 4 }, kind: 'power-sweep' },
			{ name: 'auto batch', extra: { batch: 'B-1' }, kind: 'batch' },
			{ name: 'auto time', extra: { acquired_at: '2026-11-30T08:00:00Z' }, kind: 'time' }
		];
		for (const c of cases) {
			const response = await upload({ series: c.name, ...c.extra });
			expect(response.status).toBe(202);
			const { id } = await response.json();
			uploaded.push(id);
			const { status, body } = await getJson(
				world.token,
				`/api/v1/series/${encodeURIComponent(c.name)}`
			);
			expect(status).toBe(200);
			expect(body.kind).toBe(c.kind);
			expect(body.points.measurement_id).toEqual([id]);
			// Columnar: every array has one entry per measurement.
			for (const column of Object.values(body.points)) expect(column).toHaveLength(1);
		}
	});
});

describe('the series page', () => {
	const index = () => `/projects/${world.project.slug}/series`;

	it('shows the view the kind decides, not the one the data suggests', async () => {
		for (const id of uploaded) await waitForAnalysis(world.token, id);
		const viewer = await signIn(world.people.viewer.email, PASSWORD);
		const html = async (name: string) =>
			(await viewer.get(`${index()}/${encodeURIComponent(name)}`)).text();
		expect(await html('auto map')).toContain('data-testid="hottest"');
		expect(await html('auto time')).toContain('data-testid="trend"');
		expect(await html('auto sweep')).toContain('A power sweep needs readings at two or more');
		expect(await html('auto batch')).toContain('A control chart needs two or more readings');
		// The same single placed measurement, moved into a time series, is drawn as a trend.
		const owner = await signIn(world.people.owner.email, PASSWORD);
		const map = (await db.query.series.findFirst({
			where: and(eq(series.projectId, world.project.id), eq(series.name, 'auto map'))
		}))!;
		const edit = await owner.post(`${index()}?edit=${map.id}&/update`, {
			id: String(map.id),
			name: 'auto map',
			kind: 'time',
			baseline_size: ''
		});
		expect(edit.status).toBe(303);
		const after = await html('auto map');
		expect(after).toContain('data-testid="trend"');
		expect(after).not.toContain('data-testid="hottest"');
	});

	it('lets an analyst create a series but not set specification limits', async () => {
		const analyst = await signIn(world.people.analyst.email, PASSWORD);
		const response = await analyst.post(`${index()}?/create`, {
			name: 'page batch',
			kind: 'batch',
			description: 'Pellets from line 2',
			baseline_size: '',
			upper_spec_k: '480'
		});
		expect(response.status).toBe(303);
		const made = await db.query.series.findFirst({
			where: and(eq(series.projectId, world.project.id), eq(series.name, 'page batch'))
		});
		expect(made).toMatchObject({ kind: 'batch', baselineSize: null, upperSpecK: null });
	});

	it('lets the owner set specification limits, refusing them in the wrong order', async () => {
		const owner = await signIn(world.people.owner.email, PASSWORD);
		const s = (await db.query.series.findFirst({
			where: and(eq(series.projectId, world.project.id), eq(series.name, 'page batch'))
		}))!;
		const fields = { id: String(s.id), name: s.name, kind: 'batch', baseline_size: '8' };
		const wrong = await owner.post(`${index()}?edit=${s.id}&/update`, {
			...fields,
			lower_spec_k: '480',
			upper_spec_k: '440'
		});
		expect(wrong.status).toBe(400);
		expect(await wrong.text()).toContain('must lie above the lower one');
		const right = await owner.post(`${index()}?edit=${s.id}&/update`, {
			...fields,
			lower_spec_k: '440',
			upper_spec_k: '480'
		});
		expect(right.status).toBe(303);
		const { body } = await getJson(world.token, `/api/v1/series/${encodeURIComponent(s.name)}`);
		expect(body).toMatchObject({ baseline_size: 8, lower_spec_k: 440, upper_spec_k: 480 });
	});

	it('does not let a viewer create a series', async () => {
		const viewer = await signIn(world.people.viewer.email, PASSWORD);
		const response = await viewer.post(`${index()}?/create`, { name: 'nope', kind: 'batch' });
		expect(response.status).toBe(403);
		expect(
			await db.query.series.findFirst({
				where: and(eq(series.projectId, world.project.id), eq(series.name, 'nope'))
			})
		).toBeUndefined();
	});

	it('is not found for someone outside the project', async () => {
		const outsider = await signIn(world.people.outsider.email, PASSWORD);
		expect((await outsider.get(index())).status).toBe(404);
		const one = `${index()}/${encodeURIComponent('page batch')}`;
		expect((await outsider.get(one)).status).toBe(404);
	});

	it('adds a measurement picked from the project’s others', async () => {
		const response = await upload({ label: 'stray' });
		const { id } = await response.json();
		const analyst = await signIn(world.people.analyst.email, PASSWORD);
		const page = `${index()}/${encodeURIComponent('page batch')}`;
		expect(await (await analyst.get(page)).text()).toContain('stray');
		expect((await analyst.post(`${page}?/add`, { ids: id })).status).toBe(200);
		const m = await db.query.measurements.findFirst({ where: eq(measurements.id, id) });
		expect(m?.series).toBe('page batch');
		const viewer = await signIn(world.people.viewer.email, PASSWORD);
		expect((await viewer.post(`${page}?/add`, { ids: id })).status).toBe(403);
	});
});
