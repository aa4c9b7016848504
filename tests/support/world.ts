// A throwaway project with one person per role and an outsider, made straight in the database
// so that each test file starts from a known state without depending on the demo seed.
import { randomBytes } from 'node:crypto';
import { ROLES, type Role } from '../../src/lib/roles';
import { db } from '../../src/lib/server/db';
import { memberships, projects, users } from '../../src/lib/server/db/schema';
import { hashPassword } from '../../src/lib/server/passwords';
import { createToken } from '../../src/lib/server/tokens';

export const PASSWORD = 'correct-horse-battery';

export interface World {
	project: { id: number; slug: string; name: string };
	people: Record<Role | 'outsider', { id: string; email: string }>;
	token: string;
}

export async function makeWorld(label: string): Promise<World> {
	const tag = `${label}-${randomBytes(4).toString('hex')}`;
	const passwordHash = await hashPassword(PASSWORD);
	const [project] = await db
		.insert(projects)
		.values({ slug: tag, name: `Test ${tag}` })
		.returning();
	const who = [...ROLES, 'outsider'] as const;
	const rows = await db
		.insert(users)
		.values(
			who.map((r) => ({ email: `${r}.${tag}@test.example`, name: `${r} ${tag}`, passwordHash }))
		)
		.returning();
	const people = Object.fromEntries(
		who.map((r, i) => [r, { id: rows[i].id, email: rows[i].email }])
	) as World['people'];
	await db
		.insert(memberships)
		.values(ROLES.map((role) => ({ projectId: project.id, userId: people[role].id, role })));
	// The owner made the token, so mail about its uploads goes to them.
	const { secret } = await createToken(
		project.id,
		'test PC',
		['measurements:write', 'measurements:read'],
		people.owner.id
	);
	return { project, people, token: secret };
}
