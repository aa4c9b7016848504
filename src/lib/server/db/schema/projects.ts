import {
	bigint,
	boolean,
	index,
	integer,
	jsonb,
	pgEnum,
	pgTable,
	primaryKey,
	text,
	timestamp,
	uniqueIndex
} from 'drizzle-orm/pg-core';
import { users } from './auth';
import { timestamps } from './columns';

export const roleEnum = pgEnum('role', ['viewer', 'analyst', 'reviewer', 'owner']);

export const projects = pgTable('projects', {
	id: integer().primaryKey().generatedAlwaysAsIdentity(),
	/** The project's address in URLs; unique, lower-case. */
	slug: text().notNull().unique(),
	name: text().notNull(),
	description: text().notNull().default(''),
	/** Whether each reading waits for a reviewer's sign-off (issue 7). */
	signOffRequired: boolean().notNull().default(true),
	...timestamps
});

export const memberships = pgTable(
	'memberships',
	{
		projectId: integer()
			.notNull()
			.references(() => projects.id, { onDelete: 'cascade' }),
		userId: text()
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		role: roleEnum().notNull(),
		...timestamps
	},
	(t) => [primaryKey({ columns: [t.projectId, t.userId] }), index().on(t.userId)]
);

/** Bearer tokens for acquisition PCs. Only a SHA-256 of the secret is kept. */
export const acquisitionTokens = pgTable(
	'acquisition_tokens',
	{
		id: integer().primaryKey().generatedAlwaysAsIdentity(),
		projectId: integer()
			.notNull()
			.references(() => projects.id, { onDelete: 'cascade' }),
		name: text().notNull(),
		/** The first characters of the secret, shown so people can tell tokens apart. */
		prefix: text().notNull(),
		secretHash: text().notNull(),
		scopes: text().array().notNull(),
		createdBy: text().references(() => users.id, { onDelete: 'set null' }),
		lastUsedAt: timestamp({ withTimezone: true }),
		revokedAt: timestamp({ withTimezone: true }),
		...timestamps
	},
	(t) => [uniqueIndex().on(t.secretHash), index().on(t.projectId)]
);

/** Single-use e-mailed links: invitations and password resets. Only a hash is kept. */
export const emailLinks = pgTable(
	'email_links',
	{
		id: integer().primaryKey().generatedAlwaysAsIdentity(),
		purpose: text({ enum: ['invite', 'password-reset'] }).notNull(),
		email: text().notNull(),
		secretHash: text().notNull(),
		projectId: integer().references(() => projects.id, { onDelete: 'cascade' }),
		role: roleEnum(),
		createdBy: text().references(() => users.id, { onDelete: 'set null' }),
		expiresAt: timestamp({ withTimezone: true }).notNull(),
		usedAt: timestamp({ withTimezone: true }),
		...timestamps
	},
	(t) => [uniqueIndex().on(t.secretHash)]
);

/**
 * Append-only record of who did what, when, to which object. A trigger in the migrations
 * refuses UPDATE and DELETE, so the product cannot rewrite history.
 */
export const auditLog = pgTable(
	'audit_log',
	{
		id: bigint({ mode: 'number' }).primaryKey().generatedAlwaysAsIdentity(),
		at: timestamp({ withTimezone: true }).notNull().defaultNow(),
		// No foreign keys: the record must outlive the objects it names.
		projectId: integer(),
		actorUserId: text(),
		actorTokenId: integer(),
		/** e.g. `member.invite`, `member.role`, `token.create`, `token.revoke`. */
		action: text().notNull(),
		objectType: text().notNull(),
		objectId: text().notNull(),
		before: jsonb(),
		after: jsonb()
	},
	(t) => [index().on(t.projectId, t.at)]
);
