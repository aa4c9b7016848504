import {
	doublePrecision,
	index,
	integer,
	jsonb,
	pgTable,
	text,
	timestamp,
	uniqueIndex
} from 'drizzle-orm/pg-core';
import { users } from './auth';
import { timestamps } from './columns';
import { projects } from './projects';

/** One band of a project's own material, with where its shift comes from. */
export interface ProjectMaterialMode {
	name: string;
	shiftCm1: number;
	source: string;
}

/** Materials a project adds to the built-in library (src/lib/materials.ts). */
export const materials = pgTable(
	'materials',
	{
		id: integer().primaryKey().generatedAlwaysAsIdentity(),
		projectId: integer()
			.notNull()
			.references(() => projects.id, { onDelete: 'cascade' }),
		/** Lower-case key, unique in the project and distinct from the built-in keys. */
		key: text().notNull(),
		name: text().notNull(),
		modes: jsonb().$type<ProjectMaterialMode[]>().notNull(),
		notes: text().notNull().default(''),
		createdBy: text().references(() => users.id, { onDelete: 'set null' }),
		...timestamps
	},
	(t) => [uniqueIndex().on(t.projectId, t.key)]
);

/** An instrument set-up of a project; what it is at any time is its newest version. */
export const instrumentProfiles = pgTable(
	'instrument_profiles',
	{
		id: integer().primaryKey().generatedAlwaysAsIdentity(),
		projectId: integer()
			.notNull()
			.references(() => projects.id, { onDelete: 'cascade' }),
		name: text().notNull(),
		createdBy: text().references(() => users.id, { onDelete: 'set null' }),
		...timestamps
	},
	(t) => [uniqueIndex().on(t.projectId, t.name)]
);

/**
 * Versions are never changed: an edit inserts the next one, so a reading that names a version
 * keeps the settings it was computed with.
 */
export const instrumentProfileVersions = pgTable(
	'instrument_profile_versions',
	{
		id: integer().primaryKey().generatedAlwaysAsIdentity(),
		profileId: integer()
			.notNull()
			.references(() => instrumentProfiles.id, { onDelete: 'cascade' }),
		version: integer().notNull(),
		/** Laser wavelength in vacuum, nm. */
		laserNm: doublePrecision().notNull(),
		detector: text({ enum: ['photon-counting', 'energy'] }).notNull(),
		/** Raman shift (magnitude, cm⁻¹) below which the notch or edge filter makes bands unusable. */
		filterCutoffCm1: doublePrecision().notNull(),
		opticsNotes: text().notNull().default(''),
		notes: text().notNull().default(''),
		createdBy: text().references(() => users.id, { onDelete: 'set null' }),
		createdAt: timestamp({ withTimezone: true }).notNull().defaultNow()
	},
	(t) => [uniqueIndex().on(t.profileId, t.version), index().on(t.profileId, t.createdAt)]
);
