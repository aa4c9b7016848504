// The role matrix (issue: roles enforced on the server): every page, action and API route of a
// project, tried by every role, a non-member and an anonymous visitor. Non-members get 404 (the
// project's existence does not leak), members below the needed role 403, the rest get through.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { can, ROLES, type Capability, type Role } from '../src/lib/roles';
import { closeDb } from '../src/lib/server/db';
import { createToken } from '../src/lib/server/tokens';
import { APP_URL, Session, signIn } from './support/http';
import { makeWorld, PASSWORD, type World } from './support/world';

let world: World;
const sessions = {} as Record<Role | 'outsider', Session>;

beforeAll(async () => {
	world = await makeWorld('matrix');
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
				const ok = expected === 'allowed' ? got < 400 || got === 409 : got === expected;
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
