import { and, count, desc, eq, gte, inArray, lt, or, sql, type SQL } from 'drizzle-orm';
import { db } from './db';
import { acquisitionTokens, auditLog, readings, users } from './db/schema';

/** Filters of the audit trail page, as they come from the address. */
export interface AuditFilter {
	action?: string;
	/** `user:<id>` or `token:<id>`. */
	who?: string;
	objectType?: string;
	/** Inclusive UTC days, `YYYY-MM-DD`. */
	from?: string;
	to?: string;
}

export const AUDIT_PAGE_SIZE = 50;
const DAY = /^\d{4}-\d{2}-\d{2}$/;

const entryColumns = {
	id: auditLog.id,
	at: auditLog.at,
	action: auditLog.action,
	objectType: auditLog.objectType,
	objectId: auditLog.objectId,
	before: auditLog.before,
	after: auditLog.after,
	actorUserId: auditLog.actorUserId,
	actorTokenId: auditLog.actorTokenId,
	userName: users.name,
	userEmail: users.email,
	tokenName: acquisitionTokens.name
};

function withActors<T extends { actorUserId: string | null; actorTokenId: number | null }>(
	rows: (T & { userName: string | null; userEmail: string | null; tokenName: string | null })[]
) {
	return rows.map(({ userName, userEmail, tokenName, ...row }) => ({
		...row,
		actor: actorLabel({ userName, userEmail, tokenName }, row)
	}));
}

function actorLabel(
	names: { userName: string | null; userEmail: string | null; tokenName: string | null },
	ids: { actorUserId: string | null; actorTokenId: number | null }
) {
	if (ids.actorTokenId != null)
		return { kind: 'token' as const, name: names.tokenName ?? `token #${ids.actorTokenId}` };
	if (ids.actorUserId != null)
		return {
			kind: 'person' as const,
			name: names.userName ?? names.userEmail ?? 'a deleted account',
			email: names.userEmail
		};
	return { kind: 'system' as const, name: 'system' };
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** The measurement each entry is about, when it names a measurement or one of its readings. */
async function withLinks<T extends { objectType: string; objectId: string }>(entries: T[]) {
	const ids = [
		...new Set(
			entries
				.filter((e) => e.objectType === 'reading' && UUID.test(e.objectId))
				.map((e) => e.objectId)
		)
	];
	const owners = ids.length
		? await db
				.select({ id: readings.id, measurementId: readings.measurementId })
				.from(readings)
				.where(inArray(readings.id, ids))
		: [];
	const of = new Map(owners.map((r) => [r.id, r.measurementId]));
	return entries.map((e) => ({
		...e,
		measurementId:
			e.objectType === 'measurement' && UUID.test(e.objectId)
				? e.objectId
				: e.objectType === 'reading'
					? (of.get(e.objectId) ?? null)
					: null
	}));
}

function conditions(projectId: number, f: AuditFilter): SQL[] {
	const where: SQL[] = [eq(auditLog.projectId, projectId)];
	if (f.action) where.push(eq(auditLog.action, f.action));
	if (f.objectType) where.push(eq(auditLog.objectType, f.objectType));
	const [kind, id] = f.who?.split(':', 2) ?? [];
	if (kind === 'user' && id) where.push(eq(auditLog.actorUserId, id));
	if (kind === 'token' && /^\d+$/.test(id ?? '')) where.push(eq(auditLog.actorTokenId, Number(id)));
	if (f.from && DAY.test(f.from)) where.push(gte(auditLog.at, new Date(`${f.from}T00:00:00Z`)));
	if (f.to && DAY.test(f.to)) {
		const end = new Date(`${f.to}T00:00:00Z`);
		end.setUTCDate(end.getUTCDate() + 1);
		where.push(lt(auditLog.at, end));
	}
	return where;
}

/** One page of a project's audit trail, newest first, with the choices for its filters. */
export async function auditTrail(projectId: number, filter: AuditFilter, page: number) {
	const where = and(...conditions(projectId, filter));
	const offset = (Math.max(1, page) - 1) * AUDIT_PAGE_SIZE;
	const ofProject = eq(auditLog.projectId, projectId);
	const [rows, [{ total }], actions, objectTypes, actors] = await Promise.all([
		db
			.select(entryColumns)
			.from(auditLog)
			.leftJoin(users, eq(users.id, auditLog.actorUserId))
			.leftJoin(acquisitionTokens, eq(acquisitionTokens.id, auditLog.actorTokenId))
			.where(where)
			.orderBy(desc(auditLog.at), desc(auditLog.id))
			.limit(AUDIT_PAGE_SIZE)
			.offset(offset),
		db.select({ total: count() }).from(auditLog).where(where),
		db
			.selectDistinct({ v: auditLog.action })
			.from(auditLog)
			.where(ofProject)
			.orderBy(auditLog.action),
		db
			.selectDistinct({ v: auditLog.objectType })
			.from(auditLog)
			.where(ofProject)
			.orderBy(auditLog.objectType),
		db
			.selectDistinct({
				actorUserId: auditLog.actorUserId,
				actorTokenId: auditLog.actorTokenId,
				userName: users.name,
				userEmail: users.email,
				tokenName: acquisitionTokens.name
			})
			.from(auditLog)
			.leftJoin(users, eq(users.id, auditLog.actorUserId))
			.leftJoin(acquisitionTokens, eq(acquisitionTokens.id, auditLog.actorTokenId))
			.where(ofProject)
	]);
	return {
		entries: await withLinks(withActors(rows)),
		total,
		pageSize: AUDIT_PAGE_SIZE,
		choices: {
			actions: actions.map((a) => a.v),
			objectTypes: objectTypes.map((o) => o.v),
			actors: actors
				.filter((a) => a.actorUserId != null || a.actorTokenId != null)
				.map((a) => ({
					value: a.actorTokenId != null ? `token:${a.actorTokenId}` : `user:${a.actorUserId}`,
					label:
						a.actorTokenId != null
							? `token “${a.tokenName ?? a.actorTokenId}”`
							: (a.userName ?? a.userEmail ?? a.actorUserId ?? '')
				}))
				.sort((x, y) => x.label.localeCompare(y.label))
		}
	};
}

/** The audit entries about one measurement and its readings, newest first. */
export async function measurementAudit(projectId: number, measurementId: string) {
	const readingIds = db
		.select({ id: sql<string>`${readings.id}::text` })
		.from(readings)
		.where(eq(readings.measurementId, measurementId));
	const rows = await db
		.select(entryColumns)
		.from(auditLog)
		.leftJoin(users, eq(users.id, auditLog.actorUserId))
		.leftJoin(acquisitionTokens, eq(acquisitionTokens.id, auditLog.actorTokenId))
		.where(
			and(
				eq(auditLog.projectId, projectId),
				or(
					and(eq(auditLog.objectType, 'measurement'), eq(auditLog.objectId, measurementId)),
					and(eq(auditLog.objectType, 'reading'), inArray(auditLog.objectId, readingIds))
				)
			)
		)
		.orderBy(desc(auditLog.at), desc(auditLog.id))
		.limit(200);
	return withActors(rows);
}

export type AuditEntry = Awaited<ReturnType<typeof measurementAudit>>[number];
