import { and, asc, count, eq, ne } from 'drizzle-orm';
import type { Role } from '$lib/roles';
import { recordAudit } from './audit';
import { db } from './db';
import { memberships, projects, users } from './db/schema';
import { createLink } from './links';
import { sendMail } from './mail';
import { env } from './env';

export function slugify(name: string): string {
	return (
		name
			.toLowerCase()
			.normalize('NFKD')
			.replace(/[^\p{Letter}\p{Number}]+/gu, '-')
			.replace(/^-+|-+$/g, '')
			.slice(0, 48) || 'project'
	);
}

export async function projectsOf(userId: string) {
	return db
		.select({
			slug: projects.slug,
			name: projects.name,
			description: projects.description,
			role: memberships.role
		})
		.from(memberships)
		.innerJoin(projects, eq(projects.id, memberships.projectId))
		.where(eq(memberships.userId, userId))
		.orderBy(asc(projects.name));
}

/** Create a project with its creator as owner; the slug gets a suffix when taken. */
export async function createProject(userId: string, name: string, description: string) {
	return db.transaction(async (tx) => {
		const base = slugify(name);
		let slug = base;
		for (let n = 2; await tx.query.projects.findFirst({ where: eq(projects.slug, slug) }); n++) {
			slug = `${base}-${n}`;
		}
		const [project] = await tx.insert(projects).values({ slug, name, description }).returning();
		await tx.insert(memberships).values({ projectId: project.id, userId, role: 'owner' });
		await recordAudit(tx, {
			projectId: project.id,
			actor: { userId },
			action: 'project.create',
			objectType: 'project',
			objectId: project.id,
			after: { name, slug }
		});
		return project;
	});
}

export async function membersOf(projectId: number) {
	return db
		.select({
			userId: users.id,
			name: users.name,
			email: users.email,
			role: memberships.role,
			since: memberships.createdAt
		})
		.from(memberships)
		.innerJoin(users, eq(users.id, memberships.userId))
		.where(eq(memberships.projectId, projectId))
		.orderBy(asc(users.email));
}

export class MemberError extends Error {}

async function otherOwners(tx: typeof db, projectId: number, userId: string) {
	const [row] = await tx
		.select({ n: count() })
		.from(memberships)
		.where(
			and(
				eq(memberships.projectId, projectId),
				eq(memberships.role, 'owner'),
				ne(memberships.userId, userId)
			)
		);
	return row.n;
}

export async function inviteMember(
	project: { id: number; name: string },
	email: string,
	role: Role,
	by: { id: string; name: string | null; email: string }
) {
	const existing = await db
		.select({ id: users.id })
		.from(users)
		.innerJoin(memberships, eq(memberships.userId, users.id))
		.where(and(eq(users.email, email), eq(memberships.projectId, project.id)));
	if (existing.length) throw new MemberError(`${email} is already a member of this project.`);

	const { secret } = await db.transaction(async (tx) => {
		const made = await createLink(tx, {
			purpose: 'invite',
			email,
			projectId: project.id,
			role,
			createdBy: by.id
		});
		await recordAudit(tx, {
			projectId: project.id,
			actor: { userId: by.id },
			action: 'member.invite',
			objectType: 'invitation',
			objectId: made.link.id,
			after: { email, role }
		});
		return made;
	});
	const url = `${env().ORIGIN}/invite/${secret}`;
	const inviter = by.name ?? by.email;
	await sendMail({
		to: email,
		subject: `${inviter} invited you to “${project.name}” on Phonotherm`,
		text: [
			`${inviter} invited you to join the project “${project.name}” on Phonotherm as ${role}.`,
			'',
			`Accept the invitation: ${url}`,
			'',
			'The link works once and expires in 7 days.'
		].join('\n')
	});
}

export async function changeRole(projectId: number, userId: string, role: Role, by: string) {
	await db.transaction(async (tx) => {
		const current = await tx.query.memberships.findFirst({
			where: and(eq(memberships.projectId, projectId), eq(memberships.userId, userId))
		});
		if (!current) throw new MemberError('That person is not a member of this project.');
		if (current.role === role) return;
		if (current.role === 'owner' && (await otherOwners(tx as typeof db, projectId, userId)) === 0) {
			throw new MemberError('A project needs at least one owner; make someone else owner first.');
		}
		await tx
			.update(memberships)
			.set({ role })
			.where(and(eq(memberships.projectId, projectId), eq(memberships.userId, userId)));
		await recordAudit(tx, {
			projectId,
			actor: { userId: by },
			action: 'member.role',
			objectType: 'membership',
			objectId: userId,
			before: { role: current.role },
			after: { role }
		});
	});
}

export async function removeMember(projectId: number, userId: string, by: string) {
	await db.transaction(async (tx) => {
		const current = await tx.query.memberships.findFirst({
			where: and(eq(memberships.projectId, projectId), eq(memberships.userId, userId))
		});
		if (!current) throw new MemberError('That person is not a member of this project.');
		if (current.role === 'owner' && (await otherOwners(tx as typeof db, projectId, userId)) === 0) {
			throw new MemberError('A project needs at least one owner; make someone else owner first.');
		}
		await tx
			.delete(memberships)
			.where(and(eq(memberships.projectId, projectId), eq(memberships.userId, userId)));
		await recordAudit(tx, {
			projectId,
			actor: { userId: by },
			action: 'member.remove',
			objectType: 'membership',
			objectId: userId,
			before: { role: current.role }
		});
	});
}
