// Readings that take their instrument from a profile: the upload names the profile instead of the
// laser, detector and C; the reading records the profile version and calibration it used and
// shows them; the warnings of the profile's rules; re-analysis with another calibration.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb } from '../src/lib/server/db';
import { C2_CM_K } from '../src/lib/thermometry/constants';
import { APP_URL, Session, signIn } from './support/http';
import {
	FIXTURE_PAIRS,
	fixture,
	getJson,
	postMeasurement,
	truth,
	waitForAnalysis
} from './support/pairs';
import { makeWorld, PASSWORD, type World } from './support/world';

let world: World;
let analyst: Session;
let base: string;

const SI = FIXTURE_PAIRS[0];
const SI_TRUE_K = truth.find((t) => t.id === SI.id)!.true_temperature_k;
const parts = () =>
	Object.fromEntries(Object.entries(SI.files).map(([part, name]) => [part, fixture(name)]));
/** The Si pair's metadata without the instrument fields, which the profile gives. */
const { laser_nm: _laser, ...bandAndExposure } = SI.metadata;

async function makeProfile(name: string, fields: Record<string, string> = {}) {
	const created = await analyst.post(`${base}/instruments?/create`, {
		name,
		laser_nm: '532',
		detector: 'photon-counting',
		filter_cutoff_cm1: '90',
		optics_notes: '',
		notes: '',
		...fields
	});
	expect(created.status).toBe(303);
	const path = created.headers.get('location')!;
	return { path, id: Number(path.split('/').pop()) };
}

/** Add a constant C to a profile and return its id (the newest row on the profile page). */
async function addConstant(path: string, c: string, u: string, dates: Record<string, string> = {}) {
	const added = await analyst.post(`${path}?/addConstant`, {
		c,
		u_c: u,
		source: 'test certificate',
		...dates
	});
	expect(added.status).toBeLessThan(400);
	const html = await (await analyst.get(path)).text();
	return Math.max(...[...html.matchAll(/id="calibration-(\d+)"/g)].map((m) => Number(m[1])));
}

async function measure(metadata: Record<string, unknown>) {
	const response = await postMeasurement(world.token, parts(), metadata);
	const body = await response.json();
	if (response.status !== 202) return { status: response.status, body, reading: null };
	const done = await waitForAnalysis(world.token, body.id);
	expect(done.status).toBe('done');
	const reading = await getJson(world.token, `/api/v1/measurements/${body.id}/reading`);
	expect(reading.status).toBe(200);
	return { status: 202, body, reading: reading.body };
}

const cRow = (reading: {
	budget: { input: string; value: number; standard_uncertainty: number }[];
}) => reading.budget.find((r) => r.input.startsWith('c_factor'))!;
const codes = (reading: { flags: { code: string }[] }) => reading.flags.map((f) => f.code);

let bench: { path: string; id: number };
let firstCalibration: number;

beforeAll(async () => {
	world = await makeWorld('profile-readings');
	base = `/projects/${world.project.slug}`;
	analyst = await signIn(world.people.analyst.email, PASSWORD);
	bench = await makeProfile('Bench P');
});
afterAll(closeDb);

describe('a measurement that names a profile', () => {
	it('is refused with a reason while the profile has no calibration for the band', async () => {
		const { status, body } = await measure({ ...bandAndExposure, profile: 'Bench P' });
		expect(status).toBe(422);
		expect(body.field).toBe('c_factor');
		expect(body.detail).toMatch(/no active response calibration.*520\.7/);
		const unknown = await measure({ ...bandAndExposure, profile: 'No such bench' });
		expect(unknown.status).toBe(422);
		expect(unknown.body.field).toBe('profile');
	});

	it('takes laser, detector and C from the profile and gives the same reading as typing them', async () => {
		firstCalibration = await addConstant(bench.path, '1', '0.02');
		const viaProfile = await measure({ ...bandAndExposure, profile: 'Bench P' });
		const typed = await measure({ ...SI.metadata, c_factor: 1, u_c_factor: 0.02 });
		const r = viaProfile.reading;
		// The fixture's true temperature (fixtures/spectra/truth.json) lies within U.
		expect(Math.abs(r.temperature_k - SI_TRUE_K)).toBeLessThan(r.expanded_uncertainty_k);
		expect(r.temperature_k).toBeCloseTo(typed.reading.temperature_k, 9);
		expect(r.expanded_uncertainty_k).toBeCloseTo(typed.reading.expanded_uncertainty_k, 9);
		expect(r.profile).toMatchObject({ id: bench.id, name: 'Bench P', version: 1, laser_nm: 532 });
		expect(r.calibration).toMatchObject({
			id: firstCalibration,
			method: 'constant',
			c: 1,
			u_c: 0.02
		});
		expect(typed.reading.profile).toBeNull();
		expect(typed.reading.calibration).toBeNull();
		// The budget carries the calibration's uncertainty as its C row.
		expect(cRow(r)).toMatchObject({ value: 1, standard_uncertainty: 0.02 });
		expect(codes(r)).not.toContain('calibration-expired');
		expect(codes(r)).not.toContain('laser-differs-from-profile');
	});

	it('keeps the version a reading was made with after the profile is edited', async () => {
		const before = await measure({ ...bandAndExposure, profile: bench.id });
		expect(before.reading.profile.version).toBe(1);
		const edited = await analyst.post(`${bench.path}?/edit`, {
			name: 'Bench P',
			laser_nm: '532',
			detector: 'photon-counting',
			filter_cutoff_cm1: '95',
			optics_notes: 'new edge filter',
			notes: ''
		});
		expect(edited.status).toBeLessThan(400);
		const after = await measure({ ...bandAndExposure, profile: bench.id });
		expect(after.reading.profile).toMatchObject({ version: 2, filter_cutoff_cm1: 95 });
		const again = await getJson(world.token, `/api/v1/measurements/${before.body.id}/reading`);
		expect(again.body.profile).toMatchObject({ version: 1, filter_cutoff_cm1: 90 });
		expect(again.body.profile.version_id).not.toBe(after.reading.profile.version_id);
	});

	it('stops using a calibration once the profile’s laser changed', async () => {
		const moved = await makeProfile('Moved bench');
		await addConstant(moved.path, '1', '0.02');
		const edited = await analyst.post(`${moved.path}?/edit`, {
			name: 'Moved bench',
			laser_nm: '633',
			detector: 'photon-counting',
			filter_cutoff_cm1: '90',
			optics_notes: '',
			notes: ''
		});
		expect(edited.status).toBeLessThan(400);
		const refused = await measure({ ...bandAndExposure, profile: 'Moved bench' });
		expect(refused.status).toBe(422);
		expect(refused.body.detail).toContain('present laser (633 nm)');
	});

	it('shows the profile and its calibration on the reading page, linked', async () => {
		const { body } = await measure({ ...bandAndExposure, profile: 'Bench P' });
		const html = await (await analyst.get(`${base}/measurements/${body.id}`)).text();
		expect(html).toContain(
			`href="${base}/instruments/${bench.id}#calibration-${firstCalibration}"`
		);
		expect(html).toMatch(/Bench P<\/a>, version 2/);
		expect(html).toContain(`calibration #${firstCalibration}, constant`);
	});
});

describe('the profiles API', () => {
	it('lists the project’s profiles with their newest version and active calibrations', async () => {
		const { status, body } = await getJson(world.token, '/api/v1/profiles');
		expect(status).toBe(200);
		const bench = body.profiles.find((p: { name: string }) => p.name === 'Bench P');
		expect(bench).toMatchObject({ laser_nm: 532, detector: 'photon-counting', version: 2 });
		expect(bench.calibrations.map((c: { id: number }) => c.id)).toContain(firstCalibration);
		const anonymous = await fetch(`${APP_URL}/api/v1/profiles`);
		expect(anonymous.status).toBe(401);
		expect(anonymous.headers.get('content-type')).toContain('application/problem+json');
		// Another project's token sees its own profiles only.
		const other = await makeWorld('profile-readings-other');
		const theirs = await getJson(other.token, '/api/v1/profiles');
		expect(theirs.body.profiles).toEqual([]);
	});
});

describe('warnings from the profile', () => {
	it('flags a laser or a detector other than the profile’s', async () => {
		const laser = await measure({ ...SI.metadata, laser_nm: 532.6, profile: 'Bench P' });
		expect(codes(laser.reading)).toContain('laser-differs-from-profile');
		expect(laser.reading.laser_nm).toBe(532.6);
		const detector = await measure({ ...bandAndExposure, detector: 'energy', profile: 'Bench P' });
		expect(codes(detector.reading)).toContain('detector-differs-from-profile');
		expect(detector.reading.exponent).toBe(4);
	});

	it('flags a calibration past its validity when the spectrum was taken', async () => {
		const old = await makeProfile('Old bench');
		await addConstant(old.path, '1', '0.02', {
			valid_from: '2025-01-01',
			valid_until: '2025-06-30'
		});
		const late = await measure({
			...bandAndExposure,
			profile: 'Old bench',
			acquired_at: '2026-01-15T10:00:00Z'
		});
		expect(codes(late.reading)).toContain('calibration-expired');
		expect(
			late.reading.flags.find((f: { code: string }) => f.code === 'calibration-expired').severity
		).toBe('warning');
		const inTime = await measure({
			...bandAndExposure,
			profile: 'Old bench',
			acquired_at: '2025-03-01T10:00:00Z'
		});
		expect(codes(inTime.reading)).not.toContain('calibration-expired');
		// Before the calibration began there is none to use.
		const early = await measure({
			...bandAndExposure,
			profile: 'Old bench',
			acquired_at: '2024-12-01T10:00:00Z'
		});
		expect(early.status).toBe(422);
	});

	it('leaves out a band below the filter cut-off with a warning, and refuses when none is left', async () => {
		const dropped = await measure({ ...bandAndExposure, modes: [60, 520.7], profile: 'Bench P' });
		expect(codes(dropped.reading)).toContain('below-filter-cutoff');
		expect(dropped.reading.modes.map((m: { mode_cm1: number }) => m.mode_cm1)).toEqual([520.7]);
		const high = await makeProfile('High cut-off', { filter_cutoff_cm1: '600' });
		await addConstant(high.path, '1', '0.02');
		const none = await measure({ ...bandAndExposure, profile: 'High cut-off' });
		expect(none.status).toBe(422);
		expect(none.body.field).toBe('modes');
		expect(none.body.detail).toMatch(/cut-off.*600/);
	});
});

describe('re-analysis with another calibration', () => {
	it('makes a new reading with that calibration’s C, moving T as the Boltzmann ratio says', async () => {
		const first = await measure({ ...bandAndExposure, profile: 'Bench P' });
		const second = await addConstant(bench.path, '0.95', '0.01');
		const page = `${base}/measurements/${first.body.id}`;
		const html = await (await analyst.get(page)).text();
		expect(html).toContain(`<option value="${second}"`);
		const asked = await analyst.post(`${page}?/reanalyse`, { calibration: String(second) });
		expect(asked.status).toBe(303);
		await expect
			.poll(
				async () =>
					(await getJson(world.token, `/api/v1/measurements/${first.body.id}/reading`)).body.id
			)
			.not.toBe(first.reading.id);
		const { body: r } = await getJson(world.token, `/api/v1/measurements/${first.body.id}/reading`);
		expect(r.calibration).toMatchObject({ id: second, c: 0.95, u_c: 0.01 });
		expect(cRow(r)).toMatchObject({ value: 0.95, standard_uncertainty: 0.01 });
		// R = C·ρⁿ·exp(−c₂ν̃/T) with the same fitted ratio R: 1/T₂ = 1/T₁ + ln(C₂/C₁)/(c₂ν̃)
		// (physics.md §1.1; c₂ = hc/k exact in the 2019 SI).
		const shift = first.reading.modes[0].shift_cm1;
		const expected = 1 / (1 / first.reading.temperature_k + Math.log(0.95 / 1) / (C2_CM_K * shift));
		expect(r.temperature_k).toBeCloseTo(expected, 2);
		// The first reading stays as it was.
		const old = await (
			await analyst.get(`${page}/reading.json?reading=${first.reading.id}`)
		).json();
		expect(old.calibration.id).toBe(firstCalibration);
		expect(old.temperature_k).toBe(first.reading.temperature_k);
	});

	it('refuses a calibration of another profile beside its field', async () => {
		const first = await measure({ ...bandAndExposure, profile: 'Bench P' });
		const other = await makeProfile('Other bench');
		const foreign = await addConstant(other.path, '0.9', '0.01');
		const page = `${base}/measurements/${first.body.id}`;
		const refused = await analyst.post(`${page}?/reanalyse`, { calibration: String(foreign) });
		expect(refused.status).toBe(400);
		expect(await refused.text()).toContain(`has no calibration #${foreign}`);
	});
});
