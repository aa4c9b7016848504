import { timestamp } from 'drizzle-orm/pg-core';

/** Creation and update times, shared by every table that has them. */
export const timestamps = {
	createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
	updatedAt: timestamp({ withTimezone: true })
		.notNull()
		.defaultNow()
		.$onUpdate(() => new Date())
};
