// Instrument profiles and project materials over HTTP, as a browser without JavaScript sends
// them: who may read and edit, that an edit adds a version and leaves the old one readable,
// that a project's own material is refused or kept with its field errors, and that the upload
// API takes its key.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ROLES, type Role } from '../src/lib/roles';
import { closeDb } from '../src/lib/server/db';
import { Session, signIn } from './support/http';
import { FIXTURE_PAIRS, fixture, postMeasurement, waitForAnalysis } from './support/pairs';
import { makeWorld, PASSWORD, type World } from './support/world';

let world: World;
const sessions = {} as Record<Role | 'outsider', Session>;
let base: string;
let profilePath: string;

const profile = (over: Record<string, string> = {}) => ({
	name: 'Bench Raman 532',
	laser_nm: '532.1',
	detector: 'photon-counting',
	filter_cutoff_cm1: '90',
	optics_notes: '1800 l/mm grating, 50× objective',
	notes: 'first set-up',
	...over
});

beforeAll(async () => {
	world = await makeWorld('instr');
	base = `/projects/${world.project.slug}`;
	for (const who of [...ROLES, 'outsider'] as const) {
		sessions[who] = await signIn(world.people[who].email, PASSWORD);
	}
	const created = await sessions.analyst.post(`${base}/instruments?/create`, profile());
	expect(created.status).toBe(303);
	profilePath = created.headers.get('location')!;
	expect(profilePath).toMatch(new RegExp(`^${base}/instruments/\\d+$`));
});
afterAll(closeDb);

describe('instrument profiles', () => {
	it('lets every member read the list and a profile, and hides both from non-members', async () => {
		for (const who of ROLES) {
			expect((await sessions[who].get(`${base}/instruments`)).status, who).toBe(200);
			expect((await sessions[who].get(profilePath)).status, who).toBe(200);
		}
		expect((await sessions.outsider.get(`${base}/instruments`)).status).toBe(404);
		expect((await sessions.outsider.get(profilePath)).status).toBe(404);
		expect((await sessions.outsider.post(`${profilePath}?/edit`, profile())).status).toBe(404);
	});

	it('refuses a viewer who edits or creates a profile (403), and the profile stays as it was', async () => {
		const edit = await sessions.viewer.post(`${profilePath}?/edit`, profile({ laser_nm: '785' }));
		expect(edit.status).toBe(403);
		const create = await sessions.viewer.post(
			`${base}/instruments?/create`,
			profile({ name: 'viewer try' })
		);
		expect(create.status).toBe(403);
		const page = await (await sessions.owner.get(profilePath)).text();
		expect(page).not.toContain('785 nm');
		expect(page).not.toContain('viewer try');
	});

	it('makes a new version on each edit and keeps the old one readable', async () => {
		const edit = await sessions.owner.post(
			`${profilePath}?/edit`,
			profile({
				laser_nm: '785',
				detector: 'energy',
				filter_cutoff_cm1: '120',
				notes: 'swapped laser'
			})
		);
		expect(edit.status).toBe(303);
		expect(edit.headers.get('location')).toBe(`${profilePath}?saved=1`);
		const page = await (await sessions.viewer.get(profilePath)).text();
		expect(page).toContain('v2');
		expect(page).toContain('785 nm');
		expect(page).toContain('swapped laser');
		// The first version, as saved: still listed with its own values.
		expect(page).toContain('v1');
		expect(page).toContain('532.1 nm');
		expect(page).toContain('90 cm⁻¹');
		expect(page).toContain('first set-up');
		// The laser-safety caution sits on the editor, naming the current wavelength.
		expect(page).toContain('Laser safety');
		const list = await (await sessions.viewer.get(`${base}/instruments`)).text();
		expect(list).toContain('785 nm');
	});

	it('explains a refusal next to its field and saves nothing', async () => {
		const bad = await sessions.analyst.post(
			`${profilePath}?/edit`,
			profile({ laser_nm: 'green', filter_cutoff_cm1: '-5' })
		);
		expect(bad.status).toBe(400);
		const html = await bad.text();
		expect(html).toContain('must be a number (nm)');
		expect(html).toContain('zero or more');
		const page = await (await sessions.owner.get(profilePath)).text();
		expect(page).not.toContain('v3');
	});

	it('refuses a second profile of the same name', async () => {
		const again = await sessions.analyst.post(`${base}/instruments?/create`, profile());
		expect(again.status).toBe(409);
		expect(await again.text()).toContain('already has a profile of that name');
	});

	it('answers 404 for a profile of another project or one that does not exist', async () => {
		const other = await makeWorld('instr-other');
		const theirs = await signIn(other.people.owner.email, PASSWORD);
		const id = profilePath.split('/').pop();
		expect((await theirs.get(`/projects/${other.project.slug}/instruments/${id}`)).status).toBe(
			404
		);
		expect((await sessions.owner.get(`${base}/instruments/999999999`)).status).toBe(404);
		expect((await sessions.owner.get(`${base}/instruments/abc`)).status).toBe(404);
	});
});

describe('project materials', () => {
	const material = (over: Record<string, string> = {}) => ({
		key: 'mos2-film',
		name: 'MoS₂ film',
		mode_name_0: 'A1g',
		shift_0: '403.5',
		source_0: 'own calibration, 2026-11',
		notes: '',
		...over
	});

	it('shows the built-in library with sources to every member, 404 to others', async () => {
		const html = await (await sessions.viewer.get(`${base}/materials`)).text();
		expect(html).toContain('520.7');
		expect(html).toContain('Parker');
		expect(html).toContain('gan-a1lo');
		expect((await sessions.outsider.get(`${base}/materials`)).status).toBe(404);
	});

	it('refuses a viewer (403) and lets an analyst add one', async () => {
		expect((await sessions.viewer.post(`${base}/materials?/add`, material())).status).toBe(403);
		const added = await sessions.analyst.post(`${base}/materials?/add`, material());
		expect(added.status).toBe(200);
		const html = await (await sessions.viewer.get(`${base}/materials`)).text();
		expect(html).toContain('mos2-film');
		expect(html).toContain('403.5 cm⁻¹');
		expect(html).toContain('own calibration, 2026-11');
	});

	it('puts each refusal beside its field: built-in key, missing source, bad shift, duplicate', async () => {
		const bad = await sessions.owner.post(
			`${base}/materials?/add`,
			material({ key: 'silicon', source_0: '', shift_0: '-3' })
		);
		expect(bad.status).toBe(400);
		const html = await bad.text();
		expect(html).toContain('belongs to the built-in library');
		expect(html).toContain('Say where the shift comes from');
		expect(html).toContain('between 0 and 5000');
		const dup = await sessions.owner.post(`${base}/materials?/add`, material());
		expect(dup.status).toBe(409);
		expect(await dup.text()).toContain('already has a material with that key');
	});

	it("lets the upload API name a project material's key, and refuses an unknown one", async () => {
		const added = await sessions.owner.post(
			`${base}/materials?/add`,
			material({ key: 'si-wafer-b', name: 'Wafer batch B', shift_0: '520.7', mode_name_0: 'F2g' })
		);
		expect(added.status).toBe(200);
		// The upload page offers it beside the library's keys.
		const upload = await (await sessions.analyst.get(`${base}/upload`)).text();
		expect(upload).toContain('Wafer batch B (this project)');
		const files = {
			stokes: fixture('si-532-stokes.csv'),
			anti_stokes: fixture('si-532-anti-stokes.csv')
		};
		const { modes: _modes, ...rest } = FIXTURE_PAIRS[0].metadata;
		const meta = { ...rest, material: 'si-wafer-b', c_factor: 1, u_c_factor: 0.02 };
		const posted = await postMeasurement(world.token, files, meta);
		expect(posted.status).toBe(202);
		const done = await waitForAnalysis(world.token, (await posted.json()).id);
		expect(done.status).toBe('done');
		expect(done.metadata.modes).toEqual([520.7]);

		const unknown = await postMeasurement(world.token, files, {
			...meta,
			material: 'no-such-stuff'
		});
		expect(unknown.status).toBe(422);
		expect((await unknown.json()).detail).toMatch(
			/neither a built-in key .* nor one of this project/
		);
	});
});
