// Series exports (issue 6, item 6): the committed fixture pairs and one cold pair go into one
// series through the API; its CSV, read back with papaparse (a general-purpose CSV parser, the
// reference here), must give every JSON row exactly, and both must carry the reading API's own
// numbers to the last bit.
import Papa from 'papaparse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb } from '../src/lib/server/db';
import { APP_URL, signIn, type Session } from './support/http';
import {
	coldSiliconPair,
	FIXTURE_PAIRS,
	fixture,
	getJson,
	postMeasurement,
	waitForAnalysis
} from './support/pairs';
import { makeWorld, PASSWORD, type World } from './support/world';

const SERIES = 'export run E/1 · 2026';
const C = { c_factor: 1.03, u_c_factor: 0.021 };

let world: World;
let stranger: World;
/** Measurement ids in the order of their acquired_at, which is the series' order. */
const ids: string[] = [];
let approvedReading: string;
let reviewer: Session;

const enc = encodeURIComponent(SERIES);
const api = (format: 'csv' | 'json', token = world.token, name = enc) =>
	fetch(`${APP_URL}/api/v1/series/${name}/readings.${format}`, {
		headers: { authorization: `Bearer ${token}` }
	});
const page = (format: string) => `/projects/${world.project.slug}/series/${enc}/readings.${format}`;

beforeAll(async () => {
	[world, stranger] = await Promise.all([makeWorld('exports'), makeWorld('exports-other')]);
	// One measurement takes laser, detector and C from an instrument profile and its calibration.
	const analyst = await signIn(world.people.analyst.email, PASSWORD);
	const profile = await analyst.post(`/projects/${world.project.slug}/instruments?/create`, {
		name: 'Export bench',
		laser_nm: '532',
		detector: 'photon-counting',
		filter_cutoff_cm1: '90',
		optics_notes: '',
		notes: ''
	});
	expect(profile.status).toBe(303);
	const added = await analyst.post(`${profile.headers.get('location')}?/addConstant`, {
		c: '0.97',
		u_c: '0.015',
		source: 'test certificate',
		valid_from: '2026-01-01'
	});
	expect(added.status).toBeLessThan(400);
	const pairParts = (pair: (typeof FIXTURE_PAIRS)[number]) =>
		Object.fromEntries(Object.entries(pair.files).map(([k, f]) => [k, fixture(f)]));
	const { laser_nm: _laser, ...siBand } = FIXTURE_PAIRS[0].metadata;
	const uploads = [
		...FIXTURE_PAIRS.map((pair) => ({
			parts: pairParts(pair),
			metadata: { ...pair.metadata, ...C, label: pair.id } as Record<string, unknown>
		})),
		{
			parts: pairParts(FIXTURE_PAIRS[0]),
			metadata: { ...siBand, profile: 'Export bench', label: 'on the bench profile' }
		},
		(() => {
			const cold = coldSiliconPair(11);
			return {
				parts: { stokes: cold.stokes, anti_stokes: cold.anti_stokes },
				metadata: {
					laser_nm: 532,
					modes: [520.7],
					x_axis: 'raman-shift',
					...C,
					label: 'cold, "quoted"'
				}
			};
		})()
	];
	const made = await Promise.all(
		uploads.map(async (u, i) => {
			const response = await postMeasurement(world.token, u.parts, {
				...u.metadata,
				series: SERIES,
				batch: `B-${i + 1}`,
				laser_power_mw: 1.5 + i / 3,
				x: i * 0.1,
				y: i === 0 ? undefined : -i,
				acquired_at: new Date(Date.UTC(2026, 10, 1, 8, i, 0, 123)).toISOString()
			});
			const body = await response.json();
			expect({ status: response.status, detail: body.detail }).toEqual({
				status: 202,
				detail: undefined
			});
			return body.id as string;
		})
	);
	ids.push(...made);
	for (const id of ids) await waitForAnalysis(world.token, id, 60_000);
	reviewer = await signIn(world.people.reviewer.email, PASSWORD);
	const { body } = await getJson(world.token, `/api/v1/measurements/${ids[0]}/reading`);
	approvedReading = body.id;
	const approve = await reviewer.post(
		`/projects/${world.project.slug}/measurements/${ids[0]}?/approve`,
		{
			reading: approvedReading,
			comment: 'fits look right'
		}
	);
	expect(approve.status).toBe(303);
}, 120_000);
afterAll(closeDb);

type Row = Record<string, unknown>;

// How the CSV writes each kind of value (src/lib/server/measurements/export.ts): empty for null,
// lists space-separated. Which column is which kind is stated here, by hand, not taken from JSON.
const NUMBERS = [
	'x',
	'y',
	'laser_power_mw',
	'temperature_k',
	'u_temperature_k',
	'expanded_uncertainty_k',
	'coverage_factor',
	'exponent',
	'laser_nm',
	'c_factor',
	'u_c_factor',
	'calibration_id',
	'profile_version_id'
];
const LISTS = { flags: String, modes_cm1: Number } as const;

function fromCsv(cells: Record<string, string>): Row {
	return Object.fromEntries(
		Object.entries(cells).map(([column, text]) => {
			if (column in LISTS) {
				const item = LISTS[column as keyof typeof LISTS];
				return [column, text === '' ? [] : text.split(' ').map((t) => item(t))];
			}
			if (text === '') return [column, null];
			return [column, NUMBERS.includes(column) ? Number(text) : text];
		})
	);
}

describe('series readings export', () => {
	let csvText: string;
	let json: { project: string; series: string; kind: string; readings: Row[] };

	beforeAll(async () => {
		const [csv, js] = await Promise.all([api('csv'), api('json')]);
		expect(csv.status).toBe(200);
		expect(csv.headers.get('content-type')).toContain('text/csv');
		expect(csv.headers.get('content-disposition')).toMatch(/^attachment; filename="[\w.-]+\.csv"$/);
		expect(js.status).toBe(200);
		csvText = await csv.text();
		json = await js.json();
	});

	it('has one row per measurement, in the order they were acquired', () => {
		expect(json.series).toBe(SERIES);
		expect(['batch', 'power-sweep', 'map', 'time']).toContain(json.kind);
		expect(json.readings.map((r) => r.measurement_id)).toEqual(ids);
	});

	it('reads back from CSV to exactly the JSON rows', () => {
		const parsed = Papa.parse<Record<string, string>>(csvText, {
			header: true,
			skipEmptyLines: true
		});
		expect(parsed.errors).toEqual([]);
		expect(parsed.meta.fields).toEqual(Object.keys(json.readings[0]));
		expect(parsed.data).toHaveLength(json.readings.length);
		// toEqual compares numbers with Object.is: a digit lost on the way fails here.
		parsed.data.forEach((cells, i) => expect(fromCsv(cells)).toEqual(json.readings[i]));
	});

	it('carries the reading API’s numbers and what each reading was made with', async () => {
		for (const [i, row] of json.readings.entries()) {
			const { status, body: r } = await getJson(
				world.token,
				`/api/v1/measurements/${ids[i]}/reading`
			);
			expect(status).toBe(200);
			expect(row).toMatchObject({
				reading_id: r.id,
				temperature_k: r.temperature_k,
				u_temperature_k: r.u_temperature_k,
				expanded_uncertainty_k: r.expanded_uncertainty_k,
				coverage_factor: r.coverage_factor,
				method: r.method,
				exponent: r.exponent,
				lineshape: r.lineshape,
				laser_nm: r.laser_nm,
				flags: r.flags.map((f: { code: string }) => f.code),
				modes_cm1: r.modes.map((m: { mode_cm1: number }) => m.mode_cm1),
				// C as uploaded, or from the calibration the reading API names with its profile version.
				c_factor: r.calibration?.c ?? C.c_factor,
				u_c_factor: r.calibration?.u_c ?? C.u_c_factor,
				calibration_id: r.calibration?.id ?? null,
				profile_version_id: r.profile?.version_id ?? null,
				series: SERIES,
				batch: `B-${i + 1}`
			});
			const severities = ['none', 'info', 'warning', 'error'];
			const worst = Math.max(
				0,
				...r.flags.map((f: { severity: string }) => severities.indexOf(f.severity))
			);
			expect(row.worst_severity).toBe(severities[worst]);
			// The newest sign-off decision, as the reading API gives it.
			const decided = ['approved', 'returned'].includes(r.sign_off.state);
			expect(row).toMatchObject({
				sign_off: decided ? r.sign_off.state : null,
				signed_off_by: r.sign_off.reviewer,
				signed_off_at: r.sign_off.decided_at
			});
		}
		// No detector was named, so photon counting applied: exponent n = 3 (physics.md §1).
		expect(json.readings[0]).toMatchObject({ detector: 'photon-counting', exponent: 3 });
		const onProfile = json.readings.filter((row) => row.calibration_id != null);
		expect(onProfile).toHaveLength(1);
		expect(onProfile[0]).toMatchObject({ label: 'on the bench profile', c_factor: 0.97 });
		expect(onProfile[0].profile_version_id).toEqual(expect.any(Number));
		// 40 K silicon gives no temperature: an empty cell in CSV, null in JSON, never a number.
		expect(json.readings.at(-1)).toMatchObject({ temperature_k: null, worst_severity: 'error' });
	});

	it('names the sign-off decision, and none where there is none', () => {
		expect(json.readings[0]).toMatchObject({
			sign_off: 'approved',
			signed_off_by: expect.stringContaining('reviewer')
		});
		expect(Date.parse(json.readings[0].signed_off_at as string)).toBeGreaterThan(0);
		for (const row of json.readings.slice(1))
			expect(row).toMatchObject({ sign_off: null, signed_off_at: null, signed_off_by: null });
	});

	it('gives a member the same files from the series page', async () => {
		const viewer = await signIn(world.people.viewer.email, PASSWORD);
		const csv = await viewer.get(page('csv'));
		expect(csv.status).toBe(200);
		expect(await csv.text()).toBe(csvText);
		const js = await viewer.get(page('json'));
		expect(await js.json()).toEqual(json);
		const html = await (await viewer.get(`/projects/${world.project.slug}/series/${enc}`)).text();
		expect(html).toContain(`/series/${enc}/readings.csv`);
		expect(html).toContain(`/series/${enc}/readings.json`);
	});
});

describe('who may export a series', () => {
	it('is not found for someone outside the project', async () => {
		const outsider = await signIn(world.people.outsider.email, PASSWORD);
		expect((await outsider.get(page('csv'))).status).toBe(404);
		expect((await outsider.get(page('json'))).status).toBe(404);
	});

	it('sends someone signed out to sign in', async () => {
		const response = await fetch(APP_URL + page('csv'), { redirect: 'manual' });
		expect(response.status).toBe(303);
		expect(response.headers.get('location')).toMatch(/^\/signin\?redirectTo=/);
	});

	it('asks the API for a token, and hides other projects’ series', async () => {
		const anonymous = await fetch(`${APP_URL}/api/v1/series/${enc}/readings.json`);
		expect(anonymous.status).toBe(401);
		expect(anonymous.headers.get('content-type')).toContain('application/problem+json');
		for (const format of ['csv', 'json'] as const) {
			const other = await api(format, stranger.token);
			expect(other.status).toBe(404);
			expect((await other.json()).detail).toMatch(/series/);
		}
		expect((await api('json', world.token, 'no%20such%20series')).status).toBe(404);
	});
});
