import { eq } from 'drizzle-orm';
import type { Role } from '$lib/roles';
import { recordAudit } from '../audit';
import { db } from '../db';
import { memberships, projects, users } from '../db/schema';
import { hashPassword } from '../passwords';
import { createToken } from '../tokens';
import { seedDemoMeasurements } from './measurements';
import { seedDemoSeries } from './series';

/**
 * The demo scenario: an invented optics institute with a few projects. Everything here is
 * fictional (people, samples, lab); it only gives a newcomer something real-looking to open.
 */

export const DEMO_PROJECT_SLUG = 'thin-film-hot-spots';

export interface DemoAccount {
	email: string;
	password: string;
	name: string;
	role: Role;
}

export const DEMO_ACCOUNTS: DemoAccount[] = [
	{
		email: 'lena.fischer@halvorsen.example',
		password: 'fischer-owner-26',
		name: 'Lena Fischer',
		role: 'owner'
	},
	{
		email: 'tomas.berg@halvorsen.example',
		password: 'berg-reviewer-26',
		name: 'Tomás Berg',
		role: 'reviewer'
	},
	{
		email: 'priya.nair@halvorsen.example',
		password: 'nair-analyst-26',
		name: 'Priya Nair',
		role: 'analyst'
	},
	{
		email: 'sam.ortiz@halvorsen.example',
		password: 'ortiz-viewer-26',
		name: 'Sam Ortiz',
		role: 'viewer'
	}
];

const PROJECTS = [
	{
		slug: DEMO_PROJECT_SLUG,
		name: 'Thin-film hot spots',
		description:
			'Laser-heated silicon-on-sapphire test films from the coating line: hot-spot maps and probe-heating sweeps.'
	},
	{
		slug: 'catalyst-bed-batches',
		name: 'Catalyst bed batches',
		description: 'Anatase pellet batches from the pilot reactor, tracked against control limits.'
	}
];

// People who sign in through the institute's single sign-on: their rows exist so the seeded
// memberships apply on their first sign-in (the address links the SSO account to the row).
const SSO_MEMBERS: { email: string; name: string; project: string; role: Role }[] = [
	{
		email: 'mira.okafor@halvorsen.example',
		name: 'Mira Okafor',
		project: DEMO_PROJECT_SLUG,
		role: 'reviewer'
	},
	{
		email: 'aiko.tanabe@halvorsen.example',
		name: 'Aiko Tanabe',
		project: DEMO_PROJECT_SLUG,
		role: 'analyst'
	},
	{
		email: 'jonas.lindqvist@halvorsen.example',
		name: 'Jonas Lindqvist',
		project: 'catalyst-bed-batches',
		role: 'owner'
	}
];

export interface DemoCredentials {
	project: string;
	accounts: DemoAccount[];
	token: string;
}

/** Seed once. Returns null when the scenario is already in place. */
export async function seedDemo(): Promise<DemoCredentials | null> {
	const existing = await db.query.projects.findFirst({
		where: eq(projects.slug, DEMO_PROJECT_SLUG)
	});
	if (existing) return null;

	const hashes = await Promise.all(DEMO_ACCOUNTS.map((a) => hashPassword(a.password)));
	const projectIds = await db.transaction(async (tx) => {
		const made = await tx.insert(projects).values(PROJECTS).returning();
		const ids = Object.fromEntries(made.map((p) => [p.slug, p.id]));
		const people = await tx
			.insert(users)
			.values([
				...DEMO_ACCOUNTS.map((a, i) => ({ email: a.email, name: a.name, passwordHash: hashes[i] })),
				...SSO_MEMBERS.map((m) => ({ email: m.email, name: m.name }))
			])
			.onConflictDoNothing()
			.returning();
		const idOf = (email: string) => people.find((p) => p.email === email)!.id;
		await tx.insert(memberships).values([
			...DEMO_ACCOUNTS.map((a) => ({
				projectId: ids[DEMO_PROJECT_SLUG],
				userId: idOf(a.email),
				role: a.role
			})),
			// The owner also runs the process lab's project, with the others reading it.
			{
				projectId: ids['catalyst-bed-batches'],
				userId: idOf(DEMO_ACCOUNTS[0].email),
				role: 'owner' as const
			},
			{
				projectId: ids['catalyst-bed-batches'],
				userId: idOf(DEMO_ACCOUNTS[2].email),
				role: 'analyst' as const
			},
			...SSO_MEMBERS.map((m) => ({
				projectId: ids[m.project],
				userId: idOf(m.email),
				role: m.role
			}))
		]);
		for (const p of made) {
			await recordAudit(tx, {
				projectId: p.id,
				actor: {},
				action: 'project.create',
				objectType: 'project',
				objectId: p.id,
				after: { name: p.name, slug: p.slug, seeded: true }
			});
		}
		return ids;
	});

	const owner = await db.query.users.findFirst({ where: eq(users.email, DEMO_ACCOUNTS[0].email) });
	const analyst = await db.query.users.findFirst({
		where: eq(users.email, DEMO_ACCOUNTS[2].email)
	});
	const { id: tokenId, secret } = await createToken(
		projectIds[DEMO_PROJECT_SLUG],
		'Bench 2 spectrometer PC (demo)',
		['measurements:write', 'measurements:read'],
		owner?.id ?? null
	);
	await seedDemoMeasurements({ ownerId: owner!.id, analystId: analyst!.id, tokenId });
	await seedDemoSeries(owner!.id);
	return { project: DEMO_PROJECT_SLUG, accounts: DEMO_ACCOUNTS, token: secret };
}

/** When the credentials file was lost, issue a fresh demo token so one can be printed again. */
export async function reissueDemoToken(): Promise<string | null> {
	const project = await db.query.projects.findFirst({
		where: eq(projects.slug, DEMO_PROJECT_SLUG)
	});
	if (!project) return null;
	const { secret } = await createToken(
		project.id,
		'Bench 2 spectrometer PC (demo, reissued)',
		['measurements:write', 'measurements:read'],
		null
	);
	return secret;
}
