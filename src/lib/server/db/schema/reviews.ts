import { sql } from 'drizzle-orm';
import {
	bigint,
	index,
	pgEnum,
	pgTable,
	text,
	timestamp,
	uniqueIndex,
	uuid
} from 'drizzle-orm/pg-core';
import { users } from './auth';
import { readings } from './measurements';

export const signOffDecision = pgEnum('sign_off_decision', ['approved', 'returned']);

/**
 * A reviewer's decision on one reading. A reading may be returned and later approved, but once
 * approved it is locked: the partial unique index refuses a second approval at the database.
 */
export const signOffs = pgTable(
	'sign_offs',
	{
		id: bigint({ mode: 'number' }).primaryKey().generatedAlwaysAsIdentity(),
		readingId: uuid()
			.notNull()
			.references(() => readings.id, { onDelete: 'cascade' }),
		reviewerId: text().references(() => users.id, { onDelete: 'set null' }),
		decision: signOffDecision().notNull(),
		comment: text().notNull().default(''),
		decidedAt: timestamp({ withTimezone: true }).notNull().defaultNow()
	},
	(t) => [
		index().on(t.readingId, t.decidedAt),
		uniqueIndex('sign_offs_one_approval')
			.on(t.readingId)
			.where(sql`${t.decision} = 'approved'`)
	]
);
