// The audit trail (issue 7) and the project settings page, over HTTP against the running app:
// who may see and change what, and that each audited action leaves exactly one entry.
import { and, asc, eq, gt } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, db } from '../src/lib/server/db';
import { acquisitionTokens, auditLog, projects, readings } from '../src/lib/server/db/schema';
import { signIn, type Session } from './support/http';
import { measureSi532, waitForAnalysis } from './support/pairs';
import { makeWorld, PASSWORD, type World } from './support/world';

let world: World;
let s: Record<'viewer' | 'analyst' | 'reviewer' | 'owner' | 'outsider', Session>;
const M = { id: '', reading: '' };

const base = () => `/projects/${world.project.slug}`;

const measure = (label: string) => measureSi532(world.token, label);

const entries = () =>
	db
		.select()
		.from(auditLog)
		.where(eq(auditLog.projectId, world.project.id))
		.orderBy(asc(auditLog.id));

/** The project's audit entries written while `work` ran. */
async function written(work: () => Promise<unknown>) {
	const before = await entries();
	const last = before.at(-1)?.id ?? 0;
	await work();
	return db
		.select()
		.from(auditLog)
		.where(and(eq(auditLog.projectId, world.project.id), gt(auditLog.id, last)));
}

/** The trail's table alone: the filter's choices name every action too. */
const table = (html: string) => {
	const at = html.indexOf('data-testid="audit-table"');
	return at < 0 ? '' : html.slice(at, html.indexOf('</table>', at));
};

const settings = (overrides: Record<string, string> = {}) => ({
	name: world.project.name,
	description: '',
	signOffRequired: 'on',
	...overrides
});

beforeAll(async () => {
	world = await makeWorld('audit');
	const roles = ['viewer', 'analyst', 'reviewer', 'owner', 'outsider'] as const;
	const [sessions, m] = await Promise.all([
		Promise.all(roles.map((r) => signIn(world.people[r].email, PASSWORD))),
		measure('audit A')
	]);
	s = Object.fromEntries(roles.map((r, i) => [r, sessions[i]])) as typeof s;
	Object.assign(M, m);
}, 90_000);
afterAll(closeDb);

describe('project settings', () => {
	it('are for owners only: 403 for other members, 404 for an outsider, nothing changes', async () => {
		const path = `${base()}/settings`;
		for (const who of ['viewer', 'analyst', 'reviewer'] as const) {
			expect((await s[who].get(path)).status).toBe(403);
			const post = await s[who].post(`${path}?/save`, settings({ name: 'Taken over' }));
			expect(post.status).toBe(403);
		}
		expect((await s.outsider.get(path)).status).toBe(404);
		expect((await s.outsider.post(`${path}?/save`, settings())).status).toBe(404);
		const [row] = await db.select().from(projects).where(eq(projects.id, world.project.id));
		expect(row.name).toBe(world.project.name);
		expect((await s.owner.get(path)).status).toBe(200);
	});

	it('show the Settings tab to owners and the Audit tab to reviewers and owners', async () => {
		const tabs = async (who: Session) => (await who.get(`${base()}/measurements`)).text();
		const owner = await tabs(s.owner);
		expect(owner).toContain(`href="${base()}/settings"`);
		expect(owner).toContain(`href="${base()}/audit"`);
		const reviewer = await tabs(s.reviewer);
		expect(reviewer).not.toContain(`href="${base()}/settings"`);
		expect(reviewer).toContain(`href="${base()}/audit"`);
		expect(await tabs(s.viewer)).not.toContain(`href="${base()}/audit"`);
	});

	it('turning sign-off off leaves one audit entry with before and after', async () => {
		const made = await written(async () => {
			const response = await s.owner.post(
				`${base()}/settings?/save`,
				settings({ signOffRequired: '' })
			);
			expect(response.status).toBe(200);
		});
		expect(made).toHaveLength(1);
		expect(made[0]).toMatchObject({
			action: 'project.settings',
			objectType: 'project',
			objectId: String(world.project.id),
			actorUserId: world.people.owner.id,
			before: { signOffRequired: true },
			after: { signOffRequired: false }
		});
		const [row] = await db.select().from(projects).where(eq(projects.id, world.project.id));
		expect(row.signOffRequired).toBe(false);
	});

	it('an unchanged form records nothing; a new name and description are one entry', async () => {
		const same = await written(() =>
			s.owner.post(`${base()}/settings?/save`, settings({ signOffRequired: '' }))
		);
		expect(same).toHaveLength(0);
		const made = await written(() =>
			s.owner.post(
				`${base()}/settings?/save`,
				settings({ name: `${world.project.name} (renamed)`, description: 'Bench 2 hot spots' })
			)
		);
		expect(made).toHaveLength(1);
		expect(made[0].before).toEqual({
			name: world.project.name,
			description: '',
			signOffRequired: false
		});
		expect(made[0].after).toEqual({
			name: `${world.project.name} (renamed)`,
			description: 'Bench 2 hot spots',
			signOffRequired: true
		});
		const page = await (await s.viewer.get(base())).text();
		expect(page).toContain(`${world.project.name} (renamed)`);
	});

	it('refuses an empty name with 400 beside the field', async () => {
		const made = await written(async () => {
			const response = await s.owner.post(
				`${base()}/settings?/save`,
				settings({ name: ' ', signOffRequired: '' })
			);
			expect(response.status).toBe(400);
			const html = await response.text();
			expect(html).toContain('at least two characters');
			// The form keeps what was submitted: the switch stays off as the owner left it.
			const box = /<input[^>]*name="signOffRequired"[^>]*>/.exec(html)?.[0];
			expect(box).toBeDefined();
			expect(box).not.toContain('checked');
		});
		expect(made).toHaveLength(0);
	});
});

describe('the audit trail page', () => {
	it('is closed to viewers and analysts (403) and outsiders (404)', async () => {
		expect((await s.viewer.get(`${base()}/audit`)).status).toBe(403);
		expect((await s.analyst.get(`${base()}/audit`)).status).toBe(403);
		expect((await s.outsider.get(`${base()}/audit`)).status).toBe(404);
	});

	it('shows a reviewer the token creation and the upload with who did them', async () => {
		const response = await s.reviewer.get(`${base()}/audit`);
		expect(response.status).toBe(200);
		const html = table(await response.text());
		const row = (action: string) => {
			const at = html.indexOf(`>${action}<`);
			expect(at).toBeGreaterThan(0);
			return html.slice(html.lastIndexOf('<tr', at), html.indexOf('</tr>', at));
		};
		expect(row('token.create')).toContain(`owner ${world.project.slug}`);
		expect(row('measurement.upload')).toContain('test PC');
		expect(row('measurement.upload')).toContain(M.id.slice(0, 8));
		// Entries about a measurement or a reading link to the reading page.
		expect(row('measurement.upload')).toContain(`${base()}/measurements/${M.id}"`);
		expect(row('reading.create')).toContain(`${base()}/measurements/${M.id}?reading=`);
	});

	it('filters by action, who, object type and date from the address', async () => {
		const get = async (q: string) =>
			table(await (await s.reviewer.get(`${base()}/audit?${q}`)).text());
		const tokens = await get('action=token.create');
		expect(tokens).toContain('>token.create<');
		expect(tokens).not.toContain('>measurement.upload<');
		const [token] = await db
			.select()
			.from(acquisitionTokens)
			.where(eq(acquisitionTokens.projectId, world.project.id));
		const byToken = await get(`who=token:${token.id}`);
		expect(byToken).toContain('>measurement.upload<');
		expect(byToken).not.toContain('>token.create<');
		const byObject = await get('object=reading');
		expect(byObject).toContain('>reading.create<');
		expect(byObject).not.toContain('>measurement.upload<');
		const none = await (
			await s.reviewer.get(`${base()}/audit?from=2000-01-01&to=2000-01-02`)
		).text();
		expect(none).toContain('No entries match');
		const today = new Date().toISOString().slice(0, 10);
		expect(await get(`from=${today}&to=${today}`)).toContain('>measurement.upload<');
	});

	it('pages on the server, fifty entries a page, newest first', async () => {
		// Padding entries of this throwaway project only, so that there is a second page.
		await db.insert(auditLog).values(
			Array.from({ length: 55 }, (_, i) => ({
				projectId: world.project.id,
				action: 'test.padding',
				objectType: 'test',
				objectId: String(i)
			}))
		);
		const get = async (q: string) => (await s.reviewer.get(`${base()}/audit?${q}`)).text();
		const first = await get('action=test.padding');
		expect(table(first).match(/<tr/g)).toHaveLength(51);
		expect(first).toContain('rel="next"');
		expect(first).not.toContain('rel="prev"');
		expect(table(first)).toContain('>54<');
		const second = await get('action=test.padding&page=2');
		expect(table(second).match(/<tr/g)).toHaveLength(6);
		expect(table(second)).toContain('>0<');
		expect(second).toContain('rel="prev"');
		expect(second).not.toContain('rel="next"');
		expect(second).toContain('of <span class="num">55</span>');
	});

	it('has no way to change an entry: posting to it is refused', async () => {
		const response = await s.owner.post(`${base()}/audit`, {});
		expect(response.status).toBeGreaterThanOrEqual(400);
	});
});

describe('each audited action leaves exactly one entry', () => {
	it('upload and the reading it makes', async () => {
		const upload = await db
			.select()
			.from(auditLog)
			.where(and(eq(auditLog.objectId, M.id), eq(auditLog.action, 'measurement.upload')));
		expect(upload).toHaveLength(1);
		expect(upload[0].actorTokenId).not.toBeNull();
		const reading = await db
			.select()
			.from(auditLog)
			.where(and(eq(auditLog.objectId, M.reading), eq(auditLog.action, 'reading.create')));
		expect(reading).toHaveLength(1);
	});

	it('re-analysis, and the new reading it makes', async () => {
		const requested = await written(async () => {
			const response = await s.analyst.post(`${base()}/measurements/${M.id}?/reanalyse`, {
				lineshape: 'gaussian'
			});
			expect(response.status).toBe(303);
		});
		expect(requested.map((e) => e.action)).toEqual(['measurement.reanalyse']);
		expect(requested[0].actorUserId).toBe(world.people.analyst.id);
		expect(requested[0].after).toEqual({ lineshape: 'gaussian' });
		let newer: string | undefined;
		const deadline = Date.now() + 30_000;
		while (!newer && Date.now() < deadline) {
			const rows = await db.select().from(readings).where(eq(readings.measurementId, M.id));
			newer = rows.find((r) => r.id !== M.reading)?.id;
			if (!newer) await new Promise((r) => setTimeout(r, 250));
		}
		expect(newer).toBeDefined();
		await waitForAnalysis(world.token, M.id);
		const made = await db
			.select()
			.from(auditLog)
			.where(and(eq(auditLog.objectId, newer!), eq(auditLog.action, 'reading.create')));
		expect(made).toHaveLength(1);
		expect(made[0].actorUserId).toBe(world.people.analyst.id);
	}, 60_000);

	it('the reading page lists its own history', async () => {
		const html = await (await s.viewer.get(`${base()}/measurements/${M.id}`)).text();
		const history = html.slice(html.indexOf('data-testid="audit-history"'));
		expect(history).toContain('uploaded a measurement');
		expect(history).toContain('requested a re-analysis');
		expect(history).toContain('reading fitted');
		expect(history).toContain('test PC');
	});

	it('token creation and revocation', async () => {
		const created = await written(async () => {
			const response = await s.owner.post(`${base()}/tokens?/create`, { name: 'audit PC' });
			expect(response.status).toBe(200);
		});
		expect(created.map((e) => e.action)).toEqual(['token.create']);
		const revoked = await written(async () => {
			const response = await s.owner.post(`${base()}/tokens?/revoke`, {
				id: created[0].objectId
			});
			expect(response.status).toBe(200);
		});
		expect(revoked.map((e) => e.action)).toEqual(['token.revoke']);
		expect(revoked[0].objectId).toBe(created[0].objectId);
	});

	it('member invitation, role change and removal', async () => {
		const invited = await written(() =>
			s.owner.post(`${base()}/members?/invite`, {
				email: `invitee.${world.project.slug}@test.example`,
				role: 'viewer'
			})
		);
		expect(invited.map((e) => e.action)).toEqual(['member.invite']);
		const changed = await written(() =>
			s.owner.post(`${base()}/members?/role`, { userId: world.people.analyst.id, role: 'viewer' })
		);
		expect(changed.map((e) => e.action)).toEqual(['member.role']);
		expect(changed[0]).toMatchObject({ before: { role: 'analyst' }, after: { role: 'viewer' } });
		const removed = await written(() =>
			s.owner.post(`${base()}/members?/remove`, { userId: world.people.analyst.id })
		);
		expect(removed.map((e) => e.action)).toEqual(['member.remove']);
		expect(removed[0].objectId).toBe(world.people.analyst.id);
	});
});
