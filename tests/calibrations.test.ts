// Response calibrations on an instrument profile over HTTP, as a browser without JavaScript sends
// them: who may add and retire one, that bad input comes back beside its field, and that a
// reference-temperature run stores the C that gives its own T₀ back and a later pair's T₁.
import { and, asc, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ROLES, type Role } from '../src/lib/roles';
import { closeDb, db } from '../src/lib/server/db';
import { auditLog } from '../src/lib/server/db/schema';
import { laserWavenumber } from '../src/lib/thermometry/constants';
import {
	lampCalibration,
	radianceEnergyWavelength,
	radiancePhotonWavenumber
} from '../src/lib/thermometry/planck';
import {
	trueAreas,
	wavelengthUniformAxis,
	type SyntheticSpec
} from '../src/lib/thermometry/synthetic';
import {
	sensitivities,
	temperatureFromRatio,
	temperatureFromReference
} from '../src/lib/thermometry/temperature';
import { APP_URL, Session, signIn } from './support/http';
import { FIXTURE_PAIRS, fixture, postMeasurement, truth, waitForAnalysis } from './support/pairs';
import { makeWorld, PASSWORD, type World } from './support/world';

let world: World;
const sessions = {} as Record<Role | 'outsider', Session>;
let base: string;

const LASER_NM = 532.1;
const SI = 520.7;

async function makeProfile(name: string, detector: 'photon-counting' | 'energy') {
	const created = await sessions.analyst.post(`${base}/instruments?/create`, {
		name,
		laser_nm: String(LASER_NM),
		detector,
		filter_cutoff_cm1: '90',
		optics_notes: '',
		notes: ''
	});
	expect(created.status).toBe(303);
	return created.headers.get('location')!;
}

interface Row {
	id: number;
	c: number;
	uC: number;
	status: string;
}

/** The calibration rows of a profile page, with C and u(C) at full precision. */
async function rows(path: string): Promise<Row[]> {
	const html = await (await sessions.viewer.get(path)).text();
	return [
		...html.matchAll(
			/id="calibration-(\d+)" data-c="([^"]+)" data-u-c="([^"]+)" data-status="([^"]+)"/g
		)
	].map((m) => ({ id: Number(m[1]), c: Number(m[2]), uC: Number(m[3]), status: m[4] }));
}

/** A pair's true area ratio at temperature t (physics.md §1.3a: the "pair made at T₀"). */
const ratioAt = (t: number, exponent: 3 | 4, c = 0.87) =>
	trueAreas({
		laserNm: LASER_NM,
		modeCm1: SI,
		temperatureK: t,
		exponent,
		c,
		lineshape: 'lorentzian',
		fwhmCm1: 3.5,
		stokesCounts: 1e5
	} satisfies SyntheticSpec).ratio;

let photonPath: string;
let energyPath: string;

beforeAll(async () => {
	world = await makeWorld('calib');
	base = `/projects/${world.project.slug}`;
	for (const who of [...ROLES, 'outsider'] as const) {
		sessions[who] = await signIn(world.people[who].email, PASSWORD);
	}
	photonPath = await makeProfile('CCD 532', 'photon-counting');
	energyPath = await makeProfile('Power meter 532', 'energy');
});
afterAll(closeDb);

describe('who may calibrate', () => {
	const constant = { c: '0.93', u_c: '0.02', source: 'vendor certificate' };

	it('refuses a viewer (403) and a non-member (404), and stores nothing', async () => {
		expect((await sessions.viewer.post(`${photonPath}?/addConstant`, constant)).status).toBe(403);
		expect((await sessions.viewer.post(`${photonPath}?/addReference`, {})).status).toBe(403);
		expect((await sessions.outsider.post(`${photonPath}?/addConstant`, constant)).status).toBe(404);
		expect((await sessions.outsider.get(photonPath)).status).toBe(404);
		expect(await rows(photonPath)).toEqual([]);
	});

	it('lets an analyst add a constant and every member read it; a viewer cannot retire it', async () => {
		const added = await sessions.analyst.post(`${photonPath}?/addConstant`, constant);
		expect(added.status).toBe(303);
		const [row] = await rows(photonPath);
		expect(row).toMatchObject({ c: 0.93, uC: 0.02, status: 'active' });
		for (const who of ROLES) expect((await sessions[who].get(photonPath)).status, who).toBe(200);
		const page = await (await sessions.viewer.get(photonPath)).text();
		expect(page).toContain('0.930 ± 0.020');
		expect(page).toContain('vendor certificate');
		expect(page).not.toContain('?/retire');

		const refused = await sessions.viewer.post(`${photonPath}?/retire`, { id: String(row.id) });
		expect(refused.status).toBe(403);
		expect((await rows(photonPath))[0].status).toBe('active');

		const retired = await sessions.owner.post(`${photonPath}?/retire`, { id: String(row.id) });
		expect(retired.status).toBe(303);
		expect((await rows(photonPath))[0].status).toBe('retired');
		// A calibration of another profile is not found through this one.
		expect(
			(await sessions.owner.post(`${energyPath}?/retire`, { id: String(row.id) })).status
		).toBe(404);

		const audit = await db
			.select()
			.from(auditLog)
			.where(and(eq(auditLog.projectId, world.project.id), eq(auditLog.objectType, 'calibration')))
			.orderBy(asc(auditLog.id));
		expect(audit.map((a) => a.action)).toEqual(['calibration.create', 'calibration.retire']);
		expect(audit[1].actorUserId).toBe(world.people.owner.id);
	});

	it('returns bad input beside its field and stores nothing', async () => {
		const before = (await rows(photonPath)).length;
		const bad = await sessions.analyst.post(`${photonPath}?/addReference`, {
			ratio: '-1',
			u_ratio: '0.001',
			t0_k: 'warm',
			u_t0_k: '0.2',
			mode_cm1: SI.toString(),
			valid_from: '2026-12-01',
			valid_until: '2026-01-01'
		});
		expect(bad.status).toBe(400);
		const page = await bad.text();
		expect(page).toContain('The reference ratio R₀ must be above zero.');
		expect(page).toContain('The reference temperature T₀ must be a number (K).');
		// The dates are checked once the numbers are right.
		const dates = await sessions.analyst.post(`${photonPath}?/addConstant`, {
			c: '0.9',
			u_c: '0.01',
			source: 'vendor',
			valid_from: '2026-12-01',
			valid_until: '2026-01-01'
		});
		expect(dates.status).toBe(400);
		expect(await dates.text()).toContain('The end of validity must come after its start.');
		expect((await rows(photonPath)).length).toBe(before);
	});
});

describe('reference-temperature run round trip (physics.md §1.3a)', () => {
	const t0 = 295.15;
	const uT0 = 0.2;

	it('stores the C that gives T₀ back and a second pair at T₁ within its u', async () => {
		const r0 = ratioAt(t0, 3);
		const uR0 = 0.005 * r0;
		const added = await sessions.analyst.post(`${photonPath}?/addReference`, {
			ratio: String(r0),
			u_ratio: String(uR0),
			t0_k: String(t0),
			u_t0_k: String(uT0),
			mode_cm1: String(SI)
		});
		expect(added.status).toBe(303);
		const [cal] = await rows(photonPath);
		expect(cal.status).toBe('active');
		// The pair was made with C = 0.87: the calibration finds it again.
		expect(cal.c).toBeCloseTo(0.87, 10);
		// u(C)/C = √((u(R₀)/R₀)² + (c₂ν̃m/T₀ · u(T₀)/T₀)²) (physics.md §2.1 applied to ln C).
		const x = (1.4387768775039338 * SI) / t0;
		expect(cal.uC / cal.c).toBeCloseTo(Math.hypot(0.005, (x * uT0) / t0), 10);

		const model = {
			laserCm1: laserWavenumber(LASER_NM),
			modeCm1: SI,
			exponent: 3 as const,
			c: cal.c
		};
		expect(temperatureFromRatio(r0, model)).toBeCloseTo(t0, 8);

		const t1 = 412.6;
		const r1 = ratioAt(t1, 3);
		const back = temperatureFromRatio(r1, model);
		// u(T₁) from u(C) alone: |∂T/∂C|·u(C) (physics.md §2.1).
		const uT1 = Math.abs(sensitivities(back, r1, model).c) * cal.uC;
		expect(uT1).toBeGreaterThan(0.3);
		expect(Math.abs(back - t1)).toBeLessThan(uT1);
		expect(back).toBeCloseTo(t1, 6);
		// And the reference form, which never sees C, agrees.
		expect(temperatureFromReference(r1, r0, t0, SI)).toBeCloseTo(back, 8);
	});

	it("uses the profile's exponent: an energy detector stores C for n = 4, and T₁ comes out the same", async () => {
		const r0 = ratioAt(t0, 4);
		const added = await sessions.analyst.post(`${energyPath}?/addReference`, {
			ratio: String(r0),
			u_ratio: String(0.005 * r0),
			t0_k: String(t0),
			u_t0_k: String(uT0),
			mode_cm1: String(SI)
		});
		expect(added.status).toBe(303);
		const page = await (await sessions.viewer.get(energyPath)).text();
		expect(page).toContain('n = 4');
		const [cal] = await rows(energyPath);
		expect(cal.c).toBeCloseTo(0.87, 10);
		const model = {
			laserCm1: laserWavenumber(LASER_NM),
			modeCm1: SI,
			exponent: 4 as const,
			c: cal.c
		};
		expect(temperatureFromRatio(ratioAt(388, 4), model)).toBeCloseTo(388, 6);
	});
});

/** Submit a form with a file, the way a browser does (multipart). */
async function postFile(
	session: Session,
	path: string,
	fields: Record<string, string>,
	file: { name: string; text: string },
	field = 'lamp',
	more: Record<string, { name: string; text: string }> = {}
) {
	const body = new FormData();
	for (const [k, v] of Object.entries(fields)) body.set(k, v);
	for (const [f, x] of Object.entries({ [field]: file, ...more }))
		body.set(f, new File([x.text], x.name, { type: 'text/csv' }));
	const response = await fetch(APP_URL + path, {
		method: 'POST',
		headers: { cookie: session.header(), origin: APP_URL, accept: 'text/html' },
		body,
		redirect: 'manual'
	});
	session.take(response);
	return response;
}

describe('reference run from a measurement of the project', () => {
	// The committed Si fixture pair: made at 350 K with C = 1 (fixtures/spectra/truth.json).
	const si = FIXTURE_PAIRS[0];
	const trueK = truth.find((t) => t.id === si.id)!.true_temperature_k;

	it('takes R₀, u(R₀) and the band from its reading, and gives back the C it was made with', async () => {
		const parts = Object.fromEntries(
			Object.entries(si.files).map(([part, name]) => [part, fixture(name)])
		);
		const posted = await postMeasurement(world.token, parts, {
			...si.metadata,
			c_factor: 1,
			u_c_factor: 0,
			label: 'reference pair on the heated stage'
		});
		expect(posted.status).toBe(202);
		const { id } = await posted.json();
		expect((await waitForAnalysis(world.token, id)).status).toBe('done');

		const fields = { measurement: id, t0_k: String(trueK), u_t0_k: '0.5' };
		// The fixture was taken at 532 nm; this profile's laser is 532.1 nm.
		const other = await sessions.analyst.post(`${photonPath}?/addReference`, fields);
		expect(other.status).toBe(400);
		expect(await other.text()).toMatch(/taken at 532 nm, the profile(&#39;|')s laser is 532.1 nm/);

		const created = await sessions.analyst.post(`${base}/instruments?/create`, {
			name: 'Stage bench 532',
			laser_nm: '532',
			detector: 'photon-counting',
			filter_cutoff_cm1: '90',
			optics_notes: '',
			notes: ''
		});
		const stage = created.headers.get('location')!;
		const added = await sessions.analyst.post(`${stage}?/addReference`, fields);
		expect(added.status).toBe(303);
		const [cal] = await rows(stage);
		// The pair's own C (= 1) lies within 2 u(C) of the calibrated one.
		expect(Math.abs(cal.c - 1)).toBeLessThan(2 * cal.uC);
		expect(cal.uC).toBeGreaterThan(0);
		const html = await (await sessions.viewer.get(stage)).text();
		expect(html).toContain(`/measurements/${id}?reading=`);
		expect(html).toContain('band 520.7 cm⁻¹');

		const unknown = await sessions.analyst.post(`${stage}?/addReference`, {
			...fields,
			measurement: '00000000-0000-4000-8000-000000000000'
		});
		expect(unknown.status).toBe(400);
		expect(await unknown.text()).toContain('no analysed measurement with that id');
	});
});

describe('white-light lamp calibration (physics.md §1.3b)', () => {
	// An invented instrument whose response falls towards the red, seen with a 2856 K lamp.
	const truth = (shift: number) => 0.6 + 0.3 * Math.cos((shift + 200) / 900) - 1e-4 * shift;
	const axis = wavelengthUniformAxis(LASER_NM, -1000, 1000, 900);
	const nuL = laserWavenumber(LASER_NM);
	const counts = Array.from(axis, (s, i) => {
		const w =
			(axis[Math.min(i + 1, 899)] - axis[Math.max(i - 1, 0)]) / (i === 0 || i === 899 ? 1 : 2);
		return 1e-13 * truth(s) * radiancePhotonWavenumber((nuL - s) * 100, 2856) * w * 100;
	});
	const text =
		'shift,counts\n' +
		Array.from(axis, (s, i) => `${s.toPrecision(12)},${counts[i].toPrecision(12)}`).join('\n');
	const fields = {
		axis: 'raman-shift',
		colour_temperature_k: '2856',
		u_colour_temperature_k: '30',
		u_percent: '0.5',
		mode_cm1: String(SI)
	};

	it('stores the response ratio the lamp was seen through, with u from the curve and T_c', async () => {
		expect(
			(
				await postFile(sessions.viewer, `${photonPath}?/addLamp`, fields, {
					name: 'lamp.csv',
					text
				})
			).status
		).toBe(403);
		const added = await postFile(sessions.analyst, `${photonPath}?/addLamp`, fields, {
			name: 'lamp.csv',
			text
		});
		expect(added.status).toBe(303);
		const [cal] = await rows(photonPath);
		expect(cal.c).toBeCloseTo(truth(-SI) / truth(SI), 4);
		const expected = lampCalibration({
			lamp: { shift: axis, counts },
			laserNm: LASER_NM,
			colourTemperatureK: 2856,
			uColourTemperatureK: 30,
			modeCm1: SI,
			uRelative: 0.005
		});
		expect(cal.uC).toBeCloseTo(expected.u_c, 8);
		expect(cal.uC).toBeGreaterThan(expected.budget.curve);
		expect(await (await sessions.viewer.get(photonPath)).text()).toContain(
			'lamp.csv: lamp at 2856'
		);
	});

	it('gives the same C from a certified radiance table of that lamp, and plots the data', async () => {
		// The certificate as Planck's law gives a 2856 K blackbody's energy radiance per wavelength
		// (W m⁻² sr⁻¹ nm⁻¹) every nm; checked against CODATA's Wien and Stefan–Boltzmann constants in
		// src/lib/thermometry/planck.spec.ts.
		const nm = Array.from({ length: 141 }, (_, i) => 490 + i);
		const certificate =
			'wavelength_nm,radiance\n' +
			nm
				.map((w) => `${w},${(radianceEnergyWavelength(w * 1e-9, 2856) * 1e-9).toPrecision(12)}`)
				.join('\n');
		const tableFields = {
			reference: 'certified-table',
			axis: 'raman-shift',
			u_table_percent: '1.5',
			u_percent: '0.5',
			mode_cm1: String(SI)
		};
		const missing = await postFile(sessions.analyst, `${photonPath}?/addLamp`, tableFields, {
			name: 'lamp.csv',
			text
		});
		expect(missing.status).toBe(400);
		expect(await missing.text()).toContain('certified radiance table');
		const added = await postFile(
			sessions.analyst,
			`${photonPath}?/addLamp`,
			tableFields,
			{ name: 'lamp.csv', text },
			'lamp',
			{ radiance: { name: 'certificate.csv', text: certificate } }
		);
		expect(added.status).toBe(303);
		const [byTable, byTc] = await rows(photonPath);
		expect(Math.abs(byTable.c - byTc.c) / byTc.c).toBeLessThan(1e-5);
		// u(C) from the table: √2 · 1.5 % of C, beside the curve's √2 · 0.5 %.
		expect(byTable.uC).toBeCloseTo(byTable.c * Math.SQRT2 * Math.hypot(0.015, 0.005), 6);
		const html = await (await sessions.viewer.get(photonPath)).text();
		expect(html).toContain('certified radiance certificate.csv');
		expect(html).toContain(`data-testid="calibration-plot-${byTable.id}"`);
		// A table that stops short of the lamp spectrum is refused with the reason.
		const short = await postFile(
			sessions.analyst,
			`${photonPath}?/addLamp`,
			tableFields,
			{ name: 'lamp.csv', text },
			'lamp',
			{ radiance: { name: 'short.csv', text: certificate.split('\n').slice(0, 40).join('\n') } }
		);
		expect(short.status).toBe(400);
		expect(await short.text()).toContain('outside the radiance table');
	});

	it('refuses a missing file and an unreadable one beside the file field', async () => {
		const empty = await postFile(sessions.analyst, `${photonPath}?/addLamp`, fields, {
			name: 'empty.csv',
			text: ''
		});
		expect(empty.status).toBe(400);
		expect(await empty.text()).toContain('Choose the lamp spectrum');
		const junk = await postFile(sessions.analyst, `${photonPath}?/addLamp`, fields, {
			name: 'junk.csv',
			text: 'no numbers here\nat all\n'
		});
		expect(junk.status).toBe(400);
		expect(await junk.text()).toContain('junk.csv');
	});
});

describe('measured response curve', () => {
	const truth = (shift: number) => 0.6 + 0.3 * Math.cos((shift + 200) / 900) - 1e-4 * shift;
	const table = (from: number) =>
		'shift,response\n' +
		Array.from({ length: (1000 - from) / 10 + 1 }, (_, i) => from + 10 * i)
			.map((x) => `${x},${truth(x)}`)
			.join('\n');

	it('stores C = R(−ν̃m)/R(+ν̃m) with u = C·√2·u_rel, and refuses a curve that misses the band', async () => {
		const fields = { u_percent: '1', mode_cm1: String(SI) };
		const added = await postFile(
			sessions.analyst,
			`${energyPath}?/addCurve`,
			fields,
			{ name: 'response.csv', text: table(-1000) },
			'curve'
		);
		expect(added.status).toBe(303);
		const [cal] = await rows(energyPath);
		const c = truth(-SI) / truth(SI);
		expect(cal.c).toBeCloseTo(c, 4);
		expect(cal.uC).toBeCloseTo(cal.c * Math.SQRT2 * 0.01, 12);

		const half = await postFile(
			sessions.analyst,
			`${energyPath}?/addCurve`,
			fields,
			{ name: 'stokes-only.csv', text: table(0) },
			'curve'
		);
		expect(half.status).toBe(400);
		expect(await half.text()).toContain('extend the calibration rather than extrapolate it');
	});
});

describe('validity', () => {
	it('marks an active calibration whose validity has ended', async () => {
		const added = await sessions.owner.post(`${energyPath}?/addConstant`, {
			c: '1.02',
			u_c: '0.01',
			source: 'old certificate',
			valid_from: '2020-01-01',
			valid_until: '2021-01-01'
		});
		expect(added.status).toBe(303);
		const page = await (await sessions.viewer.get(energyPath)).text();
		expect(page).toContain('2020-01-01 – 2021-01-01');
		expect(page).toContain('(past its validity)');
	});
});
