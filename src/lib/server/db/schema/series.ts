import {
	doublePrecision,
	integer,
	pgEnum,
	pgTable,
	primaryKey,
	text,
	timestamp,
	uniqueIndex,
	uuid
} from 'drizzle-orm/pg-core';
import { SERIES_KINDS } from '../../../series/kind';
import { users } from './auth';
import { timestamps } from './columns';
import { readings } from './measurements';
import { projects } from './projects';

export const seriesKind = pgEnum('series_kind', SERIES_KINDS);

/**
 * A named series of a project. Measurements belong to it through their `series` label (the
 * name), so an acquisition PC joins a series by naming it.
 */
export const series = pgTable(
	'series',
	{
		id: integer().primaryKey().generatedAlwaysAsIdentity(),
		projectId: integer()
			.notNull()
			.references(() => projects.id, { onDelete: 'cascade' }),
		name: text().notNull(),
		kind: seriesKind().notNull(),
		description: text().notNull().default(''),
		/** Specification limits (K), set by an owner; independent of the control limits. */
		lowerSpecK: doublePrecision(),
		upperSpecK: doublePrecision(),
		/** How many first readings fix the centre line and control limits; null means all. */
		baselineSize: integer(),
		createdBy: text().references(() => users.id, { onDelete: 'set null' }),
		...timestamps
	},
	(t) => [uniqueIndex().on(t.projectId, t.name)]
);

/** Who is told by e-mail when a new reading of the series breaks a rule. */
export const seriesSubscriptions = pgTable(
	'series_subscriptions',
	{
		seriesId: integer()
			.notNull()
			.references(() => series.id, { onDelete: 'cascade' }),
		userId: text()
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		createdAt: timestamp({ withTimezone: true }).notNull().defaultNow()
	},
	(t) => [primaryKey({ columns: [t.seriesId, t.userId] })]
);

/** Alerts sent, one row per reading and subscriber, so a re-run job never sends twice. */
export const seriesAlerts = pgTable(
	'series_alerts',
	{
		readingId: uuid()
			.notNull()
			.references(() => readings.id, { onDelete: 'cascade' }),
		userId: text()
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		rules: text().array().notNull(),
		sentAt: timestamp({ withTimezone: true }).notNull().defaultNow()
	},
	(t) => [primaryKey({ columns: [t.readingId, t.userId] })]
);
