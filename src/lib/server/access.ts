import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import { and, eq, isNull } from 'drizzle-orm';
import { can, type Capability, type Role, type TokenScope } from '$lib/roles';
import { db } from './db';
import { acquisitionTokens, memberships, projects } from './db/schema';
import { problem } from './problem';
import { countTokenRequest } from './ratelimit';
import { hashSecret } from './secrets';

/**
 * The one guard every server `load`, action and API route goes through. A person who is not a
 * member of a project gets 404, not 403, so that project names do not leak; a member whose role
 * is too low gets 403 with the reason.
 */

export type Project = typeof projects.$inferSelect;

export function requireUser(event: RequestEvent) {
	const user = event.locals.user;
	if (!user) {
		const back = event.url.pathname + event.url.search;
		redirect(303, `/signin?redirectTo=${encodeURIComponent(back)}`);
	}
	return user;
}

export async function requireProject(
	event: RequestEvent,
	capability: Capability,
	slug: string = event.params.project ?? ''
): Promise<{ user: NonNullable<App.Locals['user']>; project: Project; role: Role }> {
	const user = requireUser(event);
	const [row] = await db
		.select({ project: projects, role: memberships.role })
		.from(projects)
		.innerJoin(memberships, eq(memberships.projectId, projects.id))
		.where(and(eq(projects.slug, slug), eq(memberships.userId, user.id)));
	if (!row) error(404, 'Not found');
	if (!can(row.role, capability)) {
		error(403, `Your role in this project (${row.role}) does not allow this.`);
	}
	return { user, project: row.project, role: row.role };
}

export type TokenRow = typeof acquisitionTokens.$inferSelect;

const BEARER = /^Bearer\s+(\S+)\s*$/i;

/** Authenticate an acquisition PC by its bearer token, for API routes (inside `api()`). */
export async function requireToken(
	event: RequestEvent,
	scope?: TokenScope
): Promise<{ token: TokenRow; project: Project }> {
	const header = event.request.headers.get('authorization');
	if (!header) {
		throw withChallenge(
			problem(401, 'Send the acquisition token as "Authorization: Bearer <token>".')
		);
	}
	const match = BEARER.exec(header);
	if (!match) {
		throw withChallenge(
			problem(401, 'The Authorization header must have the form "Bearer <token>".')
		);
	}
	const [row] = await db
		.select({ token: acquisitionTokens, project: projects })
		.from(acquisitionTokens)
		.innerJoin(projects, eq(projects.id, acquisitionTokens.projectId))
		.where(and(eq(acquisitionTokens.secretHash, hashSecret(match[1]))));
	if (!row)
		throw withChallenge(problem(401, 'This token is not known; check that it was copied whole.'));
	if (row.token.revokedAt) {
		throw withChallenge(
			problem(401, 'This token has been revoked; ask a project owner for a new one.')
		);
	}
	if (scope && !row.token.scopes.includes(scope)) {
		throw problem(
			403,
			`This token lacks the "${scope}" scope; ask a project owner for one that has it.`
		);
	}
	await countTokenRequest(row.token.id);
	// Last-used time is for owners auditing tokens; a lost update under concurrency is harmless.
	await db
		.update(acquisitionTokens)
		.set({ lastUsedAt: new Date() })
		.where(and(eq(acquisitionTokens.id, row.token.id), isNull(acquisitionTokens.revokedAt)));
	return row;
}

function withChallenge(p: ReturnType<typeof problem>) {
	Object.assign(p.headers, { 'www-authenticate': 'Bearer realm="phonotherm"' });
	return p;
}
