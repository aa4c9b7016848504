import { and, desc, eq, isNull } from 'drizzle-orm';
import type { TokenScope } from '$lib/roles';
import { recordAudit } from './audit';
import { db } from './db';
import { acquisitionTokens } from './db/schema';
import { newSecret } from './secrets';

export const TOKEN_PREFIX_LENGTH = 11;

export async function tokensOf(projectId: number) {
	return db
		.select({
			id: acquisitionTokens.id,
			name: acquisitionTokens.name,
			prefix: acquisitionTokens.prefix,
			scopes: acquisitionTokens.scopes,
			createdAt: acquisitionTokens.createdAt,
			lastUsedAt: acquisitionTokens.lastUsedAt,
			revokedAt: acquisitionTokens.revokedAt
		})
		.from(acquisitionTokens)
		.where(eq(acquisitionTokens.projectId, projectId))
		.orderBy(desc(acquisitionTokens.createdAt));
}

/** Create a token; the secret is returned once and never stored. */
export async function createToken(
	projectId: number,
	name: string,
	scopes: TokenScope[],
	by: string | null
): Promise<{ id: number; secret: string }> {
	const { secret, hash } = newSecret('pt');
	return db.transaction(async (tx) => {
		const [row] = await tx
			.insert(acquisitionTokens)
			.values({
				projectId,
				name,
				scopes,
				prefix: secret.slice(0, TOKEN_PREFIX_LENGTH),
				secretHash: hash,
				createdBy: by
			})
			.returning({ id: acquisitionTokens.id });
		await recordAudit(tx, {
			projectId,
			actor: { userId: by },
			action: 'token.create',
			objectType: 'acquisition_token',
			objectId: row.id,
			after: { name, scopes }
		});
		return { id: row.id, secret };
	});
}

/** Revoke a token of this project; returns false when there was nothing to revoke. */
export async function revokeToken(
	projectId: number,
	tokenId: number,
	by: string
): Promise<boolean> {
	return db.transaction(async (tx) => {
		const [row] = await tx
			.update(acquisitionTokens)
			.set({ revokedAt: new Date() })
			.where(
				and(
					eq(acquisitionTokens.id, tokenId),
					eq(acquisitionTokens.projectId, projectId),
					isNull(acquisitionTokens.revokedAt)
				)
			)
			.returning({ id: acquisitionTokens.id, name: acquisitionTokens.name });
		if (!row) return false;
		await recordAudit(tx, {
			projectId,
			actor: { userId: by },
			action: 'token.revoke',
			objectType: 'acquisition_token',
			objectId: row.id,
			before: { name: row.name, revoked: false },
			after: { revoked: true }
		});
		return true;
	});
}
