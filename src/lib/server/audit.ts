import type { Database } from './db';
import { auditLog } from './db/schema';

type Tx = Pick<Database, 'insert'>;

export interface Actor {
	userId?: string | null;
	tokenId?: number | null;
}

/** Append one entry to the audit log, inside the caller's transaction when given one. */
export async function recordAudit(
	tx: Tx,
	entry: {
		projectId: number | null;
		actor: Actor;
		action: string;
		objectType: string;
		objectId: string | number;
		before?: unknown;
		after?: unknown;
	}
) {
	await tx.insert(auditLog).values({
		projectId: entry.projectId,
		actorUserId: entry.actor.userId ?? null,
		actorTokenId: entry.actor.tokenId ?? null,
		action: entry.action,
		objectType: entry.objectType,
		objectId: String(entry.objectId),
		before: entry.before ?? null,
		after: entry.after ?? null
	});
}
