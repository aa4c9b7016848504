import type { AdapterAccountType } from '@auth/core/adapters';
import { boolean, integer, pgTable, primaryKey, text, timestamp } from 'drizzle-orm/pg-core';
import { timestamps } from './columns';

// The four tables Auth.js's Drizzle adapter expects (property names are fixed by the adapter;
// the database columns follow our snake_case rule), plus our own columns on users.

export const users = pgTable('users', {
	id: text()
		.primaryKey()
		.$defaultFn(() => crypto.randomUUID()),
	name: text(),
	email: text().unique().notNull(),
	emailVerified: timestamp({ mode: 'date', withTimezone: true }),
	image: text(),
	/** argon2id; null for people who only sign in through single sign-on. */
	passwordHash: text(),
	/** E-mail the uploader when a measurement fails or carries an error flag. */
	notifyOnProblems: boolean().notNull().default(true),
	...timestamps
});

export const accounts = pgTable(
	'accounts',
	{
		userId: text()
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		type: text().$type<AdapterAccountType>().notNull(),
		provider: text().notNull(),
		providerAccountId: text().notNull(),
		refresh_token: text(),
		access_token: text(),
		expires_at: integer(),
		token_type: text(),
		scope: text(),
		id_token: text(),
		session_state: text()
	},
	(t) => [primaryKey({ columns: [t.provider, t.providerAccountId] })]
);

export const sessions = pgTable('sessions', {
	sessionToken: text().primaryKey(),
	userId: text()
		.notNull()
		.references(() => users.id, { onDelete: 'cascade' }),
	expires: timestamp({ mode: 'date', withTimezone: true }).notNull()
});

export const verificationTokens = pgTable(
	'verification_tokens',
	{
		identifier: text().notNull(),
		token: text().notNull(),
		expires: timestamp({ mode: 'date', withTimezone: true }).notNull()
	},
	(t) => [primaryKey({ columns: [t.identifier, t.token] })]
);
