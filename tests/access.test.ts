// The role matrix (issue: roles enforced on the server): every page, action and API route of a
// project, tried by every role, a non-member and an anonymous visitor. Non-members get 404 (the
// project's existence does not leak), members below the needed role 403, the rest get through.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { can, ROLES, type Capability, type Role } from '../src/lib/roles';
import { closeDb } from '../src/lib/server/db';
import { createToken } from '../src/lib/server/tokens';
import { APP_URL, Session, signIn } from './support/http';
import { FIXTURE_PAIRS, fixture, postMeasurement, waitForAnalysis } from './support/pairs';
import { makeWorld, PASSWORD, type World } from './support/world';

let world: World;
let measurementId: string;
const sessions = {} as Record<Role | 'outsider', Session>;

beforeAll(async () => {
	world = await makeWorld('matrix');
	const posted = await postMeasurement(
		world.token,
		{ stokes: fixture('si-532-stokes.csv'), anti_stokes: fixture('si-532-anti-stokes.csv') },
		{ ...FIXTURE_PAIRS[0].metadata, c_factor: 1, u_c_factor: 0.02 }
	);
	measurementId = (await posted.json()).id;
	await waitForAnalysis(world.token, measurementId);
	for (const who of [...ROLES, 'outsider'] as const) {
		sessions[who] = await signIn(world.people[who].email, PASSWORD);
	}
});
afterAll(closeDb);

interface Route {
	name: string;
	capability: Capability;
	send: (s: Session) => Promise<Response>;
}

let n = 0;
const routes = (): Route[] => {
	const p = `/projects/${world.project.slug}`;
	return [
		{ name: 'GET project home', capability: 'read', send: (s) => s.get(p) },
		{ name: 'GET people', capability: 'read', send: (s) => s.get(`${p}/members`) },
		{ name: 'GET tokens', capability: 'manage', send: (s) => s.get(`${p}/tokens`) },
		{
			name: 'POST invite',
			capability: 'manage',
			send: (s) =>
				s.post(`${p}/members?/invite`, { email: `new${n++}@test.example`, role: 'viewer' })
		},
		{
			name: 'POST change role',
			capability: 'manage',
			send: (s) => s.post(`${p}/members?/role`, { userId: world.people.viewer.id, role: 'viewer' })
		},
		{
			name: 'POST remove member',
			capability: 'manage',
			send: (s) => s.post(`${p}/members?/remove`, { userId: 'nobody' })
		},
		{
			name: 'POST create token',
			capability: 'manage',
			send: (s) => s.post(`${p}/tokens?/create`, { name: 'matrix PC' })
		},
		{ name: 'GET measurements', capability: 'read', send: (s) => s.get(`${p}/measurements`) },
		{
			name: 'GET readings CSV',
			capability: 'read',
			send: (s) => s.get(`${p}/measurements/readings.csv`)
		},
		{ name: 'GET API page', capability: 'read', send: (s) => s.get(`${p}/api`) },
		{
			name: 'GET reading page',
			capability: 'read',
			send: (s) => s.get(`${p}/measurements/${measurementId}`)
		},
		{
			name: 'GET reading JSON',
			capability: 'read',
			send: (s) => s.get(`${p}/measurements/${measurementId}/reading.json`)
		},
		{
			name: 'GET reading CSV',
			capability: 'read',
			send: (s) => s.get(`${p}/measurements/${measurementId}/reading.csv`)
		},
		{
			name: 'GET original file',
			capability: 'read',
			send: (s) => s.get(`${p}/measurements/${measurementId}/files/stokes`)
		},
		{ name: 'GET upload page', capability: 'upload', send: (s) => s.get(`${p}/upload`) },
		{ name: 'GET series', capability: 'read', send: (s) => s.get(`${p}/series`) },
		{ name: 'GET instruments', capability: 'read', send: (s) => s.get(`${p}/instruments`) },
		{ name: 'GET materials', capability: 'read', send: (s) => s.get(`${p}/materials`) },
		{ name: 'GET audit trail', capability: 'sign-off', send: (s) => s.get(`${p}/audit`) },
		{ name: 'GET settings', capability: 'manage', send: (s) => s.get(`${p}/settings`) },
		{
			name: 'POST upload',
			capability: 'upload',
			// Refused or accepted, the guard answers first: an empty upload is a 4xx of its own.
			send: (s) => s.post(`${p}/upload?/upload`, { laser_nm: '532' })
		},
		{
			name: 'POST re-analyse',
			capability: 'reanalyse',
			send: (s) =>
				s.post(`${p}/measurements/${measurementId}?/reanalyse`, {
					lineshape: 'gaussian',
					detector: 'photon-counting',
					c_factor: '1',
					u_c_factor: '0.02',
					coverage_factor: '2'
				})
		},
		{
			name: 'POST revoke token',
			capability: 'manage',
			send: async (s) => {
				const { id } = await createToken(
					world.project.id,
					'to revoke',
					['measurements:read'],
					null
				);
				return s.post(`${p}/tokens?/revoke`, { id: String(id) });
			}
		}
	];
};

describe('project pages and actions by role', () => {
	it('covers every role against every route', async () => {
		const table: string[] = [];
		for (const route of routes()) {
			for (const who of [...ROLES, 'outsider'] as const) {
				const response = await route.send(sessions[who]);
				const expected = who === 'outsider' ? 404 : can(who, route.capability) ? 'allowed' : 403;
				const got = response.status;
				// Allowed means the guard let it through: the page answers, or the action judges
				// the input on its merits (a 400/409/422 of its own), but never 401/403/404.
				const ok =
					expected === 'allowed' ? got < 500 && ![401, 403, 404].includes(got) : got === expected;
				if (!ok) table.push(`${route.name} as ${who}: expected ${expected}, got ${got}`);
			}
		}
		expect(table).toEqual([]);
	});

	it('sends anonymous visitors to sign in, for pages and actions alike', async () => {
		const anonymous = new Session();
		for (const route of routes()) {
			const response = await route.send(anonymous);
			expect(response.status, route.name).toBe(303);
			expect(response.headers.get('location'), route.name).toMatch(/^\/signin\?redirectTo=/);
		}
	});

	it('answers 404 for a project that does not exist, as for one the visitor is not in', async () => {
		const response = await sessions.owner.get('/projects/no-such-project-anywhere');
		expect(response.status).toBe(404);
	});
});

describe('acquisition tokens on the API', () => {
	const whoami = (headers: Record<string, string>) =>
		fetch(`${APP_URL}/api/v1/whoami`, { headers });

	it('names the project and scopes of a valid token', async () => {
		const response = await whoami({ authorization: `Bearer ${world.token}` });
		expect(response.status).toBe(200);
		const body = await response.json();
		expect(body.project.slug).toBe(world.project.slug);
		expect(body.token.scopes).toEqual(['measurements:write', 'measurements:read']);
		expect(world.token.startsWith(body.token.prefix)).toBe(true);
	});

	it.each([
		['a missing header', {}],
		['a malformed header', { authorization: 'Token abc' }],
		['an unknown token', { authorization: 'Bearer pt_not-a-real-token' }]
	])('refuses %s with problem+json 401', async (_label, headers) => {
		const response = await whoami(headers as Record<string, string>);
		expect(response.status).toBe(401);
		expect(response.headers.get('content-type')).toBe('application/problem+json');
		expect(response.headers.get('www-authenticate')).toMatch(/^Bearer/);
		const body = await response.json();
		expect(body.status).toBe(401);
		expect(body.detail).toMatch(/token|Authorization/);
	});

	it('refuses a revoked token', async () => {
		const { id, secret } = await createToken(
			world.project.id,
			'short-lived',
			['measurements:read'],
			null
		);
		expect((await whoami({ authorization: `Bearer ${secret}` })).status).toBe(200);
		const revoke = await sessions.owner.post(`/projects/${world.project.slug}/tokens?/revoke`, {
			id: String(id)
		});
		expect(revoke.status).toBe(200);
		const response = await whoami({ authorization: `Bearer ${secret}` });
		expect(response.status).toBe(401);
		expect((await response.json()).detail).toMatch(/revoked/);
	});

	it('answers unknown API paths in problem+json', async () => {
		const response = await fetch(`${APP_URL}/api/v1/nowhere`);
		expect(response.status).toBe(404);
		expect(response.headers.get('content-type')).toBe('application/problem+json');
	});
});
