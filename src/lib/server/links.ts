import { and, eq, gt, isNull } from 'drizzle-orm';
import type { Role } from '$lib/roles';
import { db, type Database } from './db';
import { emailLinks } from './db/schema';
import { hashSecret, newSecret } from './secrets';

/** Single-use links sent by e-mail. Only their hash is stored; each expires and works once. */

export const LINK_LIFETIME_MS = {
	invite: 7 * 24 * 3600_000,
	'password-reset': 3600_000
} as const;

export type LinkPurpose = keyof typeof LINK_LIFETIME_MS;
export type EmailLink = typeof emailLinks.$inferSelect;

export async function createLink(
	tx: Pick<Database, 'insert'>,
	input: {
		purpose: LinkPurpose;
		email: string;
		projectId?: number;
		role?: Role;
		createdBy?: string;
	}
): Promise<{ secret: string; link: EmailLink }> {
	const { secret, hash } = newSecret(input.purpose === 'invite' ? 'inv' : 'rst');
	const [link] = await tx
		.insert(emailLinks)
		.values({
			purpose: input.purpose,
			email: input.email,
			projectId: input.projectId,
			role: input.role,
			createdBy: input.createdBy,
			secretHash: hash,
			expiresAt: new Date(Date.now() + LINK_LIFETIME_MS[input.purpose])
		})
		.returning();
	return { secret, link };
}

export type LinkState = { ok: true; link: EmailLink } | { ok: false; reason: string };

/** Look a link up without using it (to show the page that completes it). */
export async function peekLink(secret: string, purpose: LinkPurpose): Promise<LinkState> {
	const link = await db.query.emailLinks.findFirst({
		where: and(eq(emailLinks.secretHash, hashSecret(secret)), eq(emailLinks.purpose, purpose))
	});
	return judge(link);
}

function judge(link: EmailLink | undefined): LinkState {
	if (!link)
		return { ok: false, reason: 'This link is not valid. Check that it was copied whole.' };
	if (link.usedAt)
		return { ok: false, reason: 'This link has already been used. Each link works once.' };
	if (link.expiresAt.getTime() <= Date.now()) {
		return { ok: false, reason: 'This link has expired. Ask for a new one.' };
	}
	return { ok: true, link };
}

/**
 * Mark a link used inside the caller's transaction. The conditional update makes two
 * simultaneous uses resolve to one winner.
 */
export async function consumeLink(
	tx: Pick<Database, 'update' | 'query'>,
	secret: string,
	purpose: LinkPurpose
): Promise<LinkState> {
	const [link] = await tx
		.update(emailLinks)
		.set({ usedAt: new Date() })
		.where(
			and(
				eq(emailLinks.secretHash, hashSecret(secret)),
				eq(emailLinks.purpose, purpose),
				isNull(emailLinks.usedAt),
				gt(emailLinks.expiresAt, new Date())
			)
		)
		.returning();
	if (link) return { ok: true, link };
	return judge(
		await tx.query.emailLinks.findFirst({ where: eq(emailLinks.secretHash, hashSecret(secret)) })
	);
}
